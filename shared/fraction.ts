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

// A YAML 1.2 core-schema float as written (`+1.5`, `.5`, `5.`, `1e-3`), and what String(x) prints.
const DECIMAL = /^([-+]?)(\d*)(?:\.(\d*))?(?:e([+-]?\d+))?$/i;

/** Is `text` a plain decimal literal that decimalToRational can read exactly? */
export function isDecimalText(text: string): boolean {
  const m = DECIMAL.exec(text);
  return m !== null && /\d/.test((m[2] ?? '') + (m[3] ?? '')) && (m[4] === undefined || Math.abs(Number(m[4])) <= 400);
}

/**
 * The exact value of a decimal as a reduced fraction: of the decimal that String(x) prints for
 * a number, or of the decimal text itself (the source text of a design file's number, which may
 * carry more digits than the nearest double keeps).
 */
export function decimalToRational(x: number | string): Rational {
  if (typeof x === 'number' && !Number.isFinite(x)) throw new Error(`not a finite number: ${x}`);
  const text = typeof x === 'number' ? String(x) : x;
  const m = DECIMAL.exec(text);
  if (!m || !isDecimalText(text)) throw new Error(`cannot read ${x} as a decimal`);
  const [, sign, whole = '', frac = '', expText] = m;
  let num = BigInt((whole + frac) || '0');
  const exp = (expText ? Number(expText) : 0) - frac.length;
  let den = 1n;
  if (exp >= 0) num *= 10n ** BigInt(exp);
  else den = 10n ** BigInt(-exp);
  if (sign === '-') num = -num;
  return reduce(num, den);
}

