// Method: exact rational arithmetic on bigints for the iteration bound's decimal node times.
// Convention: a number means the shortest decimal that prints back to it (String(x)), as typed.

/** A fraction num/den with den > 0, reduced. */
export interface Rational {
  num: bigint;
  den: bigint;
}

export function gcd(a: bigint, b: bigint): bigint {
  if (a < 0n) a = -a;
  if (b < 0n) b = -b;
  while (b !== 0n) {
    const t = a % b;
    a = b;
    b = t;
  }
  return a;
}

export function reduce(num: bigint, den: bigint): Rational {
  if (den === 0n) throw new Error('fraction with a zero denominator');
  if (den < 0n) {
    num = -num;
    den = -den;
  }
  const g = gcd(num, den);
  return g > 1n ? { num: num / g, den: den / g } : { num, den };
}

/** Smallest integer >= num/den (den > 0). */
export function ceilDiv(num: bigint, den: bigint): bigint {
  const q = num / den; // truncates toward zero
  return num > 0n && q * den !== num ? q + 1n : q;
}

const DECIMAL = /^(-?)(\d+)(?:\.(\d+))?(?:e([+-]?\d+))?$/i;

/** The exact value of the decimal that String(x) prints, as a reduced fraction. */
export function decimalToRational(x: number): Rational {
  if (!Number.isFinite(x)) throw new Error(`not a finite number: ${x}`);
  const m = DECIMAL.exec(String(x));
  if (!m) throw new Error(`cannot read ${x} as a decimal`);
  const [, sign, whole, frac = '', expText] = m;
  let num = BigInt(whole + frac);
  const exp = (expText ? Number(expText) : 0) - frac.length;
  let den = 1n;
  if (exp >= 0) num *= 10n ** BigInt(exp);
  else den = 10n ** BigInt(-exp);
  if (sign === '-') num = -num;
  return reduce(num, den);
}

