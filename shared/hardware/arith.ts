// Number systems for simulating a DFG: exact rationals, and the two's-complement fixed-point
// arithmetic the generated RTL uses. Convention: every operation maps zero operands to zero.
import { decimalToRational, reduce, type Rational } from '../fraction';
import type { NodeOp } from '../types';

/** One number system: how each DFG operation acts on values of type T. */
export interface Arithmetic<T> {
  readonly name: 'exact' | 'fixed';
  readonly zero: T;
  fromInt(n: bigint): T;
  add(a: T, b: T): T;
  sub(a: T, b: T): T;
  neg(a: T): T;
  mul(a: T, b: T): T;
  /** a times a coefficient of the design file (gain): a number, or its exact decimal source text. */
  scale(a: T, coefficient: Coefficient): T;
  equals(a: T, b: T): boolean;
  format(a: T): string;
  /** A JSON-safe rendering (string for big values). */
  toJson(a: T): string | number;
  /**
   * A number system with per-signal formats evaluates a whole node at once (its operands are in
   * their producers' formats, its result in its own): `at` is the iteration or cycle, for the
   * overflow record. Without it, applyOp composes the operations above.
   */
  node?(id: string, op: NodeOp, operands: T[], coefficient: Coefficient | null, at: number): T;
  /** The value an output port shows of its producer's value (requantised to the output's format). */
  output?(id: string, value: T, at: number): T;
}

/** One node evaluated in a number system: its own hook when it has one, else applyOp. */
export function evalNode<T>(ar: Arithmetic<T>, id: string, op: NodeOp, operands: T[], coefficient: Coefficient | null, at: number): T {
  if (operands.length === 0) return ar.zero;
  return ar.node ? ar.node(id, op, operands, coefficient, at) : applyOp(ar, op, operands, coefficient);
}

/**
 * A coefficient as the engine computes with it: the number, or the decimal text of the design
 * file when that text has more digits than the nearest double keeps (`coefficientText`).
 */
export type Coefficient = number | string;

// ---------------------------------------------------------------- exact decimals

/**
 * An exact decimal m / 10^e (e >= 0). Integer inputs and decimal coefficients under add, sub,
 * neg and mul only ever give such numbers, so they are exact fractions without any gcd work.
 */
export interface Decimal {
  m: bigint;
  e: number;
}

const D0: Decimal = { m: 0n, e: 0 };
const POW10: bigint[] = [1n];
function pow10(k: number): bigint {
  while (POW10.length <= k) POW10.push(POW10[POW10.length - 1] * 10n);
  return POW10[k];
}

function dAlign(a: Decimal, b: Decimal): [bigint, bigint, number] {
  if (a.e === b.e) return [a.m, b.m, a.e];
  return a.e > b.e ? [a.m, b.m * pow10(a.e - b.e), a.e] : [a.m * pow10(b.e - a.e), b.m, b.e];
}
/** Drops trailing decimal zeros so that scales stay as small as the values allow. */
function dTrim(m: bigint, e: number): Decimal {
  if (m === 0n) return D0;
  while (e > 0 && m % 10n === 0n) {
    m /= 10n;
    e--;
  }
  return { m, e };
}

/** The exact decimal of a coefficient: its source text, or the decimal that String(c) prints. */
export function decimalOf(c: Coefficient): Decimal {
  const q = decimalToRational(c);
  // q.den divides a power of ten because q came from a decimal.
  let e = 0;
  while (pow10(e) % q.den !== 0n) e++;
  return dTrim((q.num * pow10(e)) / q.den, e);
}

export function decimalToString(a: Decimal): string {
  if (a.e === 0) return a.m.toString();
  const neg = a.m < 0n;
  const digits = (neg ? -a.m : a.m).toString().padStart(a.e + 1, '0');
  return `${neg ? '-' : ''}${digits.slice(0, digits.length - a.e)}.${digits.slice(digits.length - a.e)}`;
}

/** The same number as a reduced fraction. */
export function decimalToFraction(a: Decimal): Rational {
  return reduce(a.m, pow10(a.e));
}

/**
 * Exact arithmetic: every value is an exact decimal fraction m / 10^e with a BigInt m, so a
 * coefficient such as -0.5 or 0.1 is the exact number the file gives and two evaluations agree
 * exactly or not at all.
 */
export function exactArithmetic(): Arithmetic<Decimal> {
  const coefs = new Map<Coefficient, Decimal>();
  return {
    name: 'exact',
    zero: D0,
    fromInt: (n) => ({ m: n, e: 0 }),
    add(a, b) {
      const [x, y, e] = dAlign(a, b);
      return { m: x + y, e };
    },
    sub(a, b) {
      const [x, y, e] = dAlign(a, b);
      return { m: x - y, e };
    },
    neg: (a) => ({ m: -a.m, e: a.e }),
    mul: (a, b) => (a.e === 0 && b.e === 0 ? { m: a.m * b.m, e: 0 } : dTrim(a.m * b.m, a.e + b.e)),
    scale(a, c) {
      let q = coefs.get(c);
      if (!q) {
        q = decimalOf(c);
        coefs.set(c, q);
      }
      return q.e === 0 && a.e === 0 ? { m: a.m * q.m, e: 0 } : dTrim(a.m * q.m, a.e + q.e);
    },
    equals(a, b) {
      const [x, y] = dAlign(a, b);
      return x === y;
    },
    format: (a) => decimalToString(dTrim(a.m, a.e)),
    toJson(a) {
      const t = dTrim(a.m, a.e);
      if (t.e === 0 && t.m <= BigInt(Number.MAX_SAFE_INTEGER) && t.m >= BigInt(Number.MIN_SAFE_INTEGER)) return Number(t.m);
      return decimalToString(t);
    },
  };
}

/** Bits of a decimal's integer part and scale: the growth guard of long exact runs. */
export function decimalBits(a: Decimal): number {
  const n = a.m < 0n ? -a.m : a.m;
  return n.toString(2).length + Math.ceil(a.e * 3.33);
}

/**
 * decimalBits(a) > maxBits, by one shift instead of a binary string: the guard runs on every
 * value of an exact simulation. The bit count of |m| (1 for zero) exceeds k exactly when
 * |m| >= 2^k, for k >= 1.
 */
export function decimalExceedsBits(a: Decimal, maxBits: number): boolean {
  const k = maxBits - Math.ceil(a.e * 3.33);
  if (k < 1) return true;
  const n = a.m < 0n ? -a.m : a.m;
  return n >> BigInt(k) !== 0n;
}

/**
 * Whether exact decimals fall outside [min, max], exactly: each bound is scaled to a value's
 * exponent once per exponent and kept, so a check costs a comparison of two integers.
 */
export class DecimalRange {
  private readonly scaledMin = new Map<number, bigint>();
  private readonly scaledMax = new Map<number, bigint>();
  constructor(
    readonly min: Decimal,
    readonly max: Decimal,
  ) {}
  outside(x: Decimal): boolean {
    // A bound of the other sign cannot be crossed.
    if (!(x.m >= 0n && this.min.m <= 0n) && less(x, this.min, this.scaledMin, true)) return true;
    if (!(x.m <= 0n && this.max.m >= 0n) && less(x, this.max, this.scaledMax, false)) return true;
    return false;
  }
}

/** x < bound (below) or bound < x (!below), with the bound scaled to x's exponent when it is the smaller. */
function less(x: Decimal, bound: Decimal, cache: Map<number, bigint>, below: boolean): boolean {
  let xm = x.m;
  let bm: bigint;
  if (x.e >= bound.e) {
    let c = cache.get(x.e);
    if (c === undefined) {
      c = bound.m * pow10(x.e - bound.e);
      cache.set(x.e, c);
    }
    bm = c;
  } else {
    xm = x.m * pow10(bound.e - x.e);
    bm = bound.m;
  }
  return below ? xm < bm : bm < xm;
}

// ---------------------------------------------------------------- fixed point (the RTL's numbers)

export interface FixedFormat {
  /** Data width W: every signal is a W-bit two's-complement integer. */
  width: number;
  /** Fractional bits of the quantised coefficients. */
  coefFrac: number;
}

export const DEFAULT_FIXED: FixedFormat = { width: 16, coefFrac: 14 };

/**
 * A coefficient quantised to coefFrac fractional bits: round(c * 2^coefFrac), ties away from
 * zero, computed on the exact decimal so that the TypeScript model and the RTL constant agree.
 */
export function quantizeCoefficient(c: Coefficient, coefFrac: number): bigint {
  const q = decimalToRational(c);
  const scaled = q.num * (1n << BigInt(coefFrac));
  const neg = scaled < 0n;
  const mag = neg ? -scaled : scaled;
  // round half away from zero: floor((2*mag + den) / (2*den))
  const rounded = (2n * mag + q.den) / (2n * q.den);
  return neg ? -rounded : rounded;
}

/** Width of the smallest two's-complement field that holds v (at least 2 bits). */
export function signedWidth(v: bigint): number {
  const mag = v < 0n ? -v - 1n : v;
  return Math.max(2, mag.toString(2).length + 1);
}

/** Width of the coefficient field for a set of quantised coefficients: at least coefFrac + 1. */
export function coefficientWidth(quantised: bigint[], coefFrac: number): number {
  let w = coefFrac + 1;
  for (const q of quantised) w = Math.max(w, signedWidth(q));
  return w;
}

/**
 * W-bit two's-complement arithmetic, exactly what the generated Verilog computes:
 * add, sub, neg and signal products keep the low W bits (wrap around); a gain multiplies by the
 * quantised coefficient at full precision, shifts right arithmetically by coefFrac (rounding
 * toward minus infinity) and keeps the low W bits.
 */
export function fixedArithmetic(format: FixedFormat = DEFAULT_FIXED): Arithmetic<bigint> {
  const W = format.width;
  const F = BigInt(format.coefFrac);
  if (!Number.isInteger(W) || W < 2 || W > 64) throw new Error(`data width must be 2..64 bits, got ${W}`);
  if (!Number.isInteger(format.coefFrac) || format.coefFrac < 0 || format.coefFrac > 60) {
    throw new Error(`coefficient fraction bits must be 0..60, got ${format.coefFrac}`);
  }
  const wrap = (v: bigint) => BigInt.asIntN(W, v);
  const coefs = new Map<Coefficient, bigint>();
  return {
    name: 'fixed',
    zero: 0n,
    fromInt: (n) => wrap(n),
    add: (a, b) => wrap(a + b),
    sub: (a, b) => wrap(a - b),
    neg: (a) => wrap(-a),
    mul: (a, b) => wrap(a * b),
    scale(a, c) {
      let q = coefs.get(c);
      if (q === undefined) {
        q = quantizeCoefficient(c, format.coefFrac);
        coefs.set(c, q);
      }
      // BigInt >> is an arithmetic shift (floor), as Verilog's >>> on a signed product.
      return wrap((a * q) >> F);
    },
    equals: (a, b) => a === b,
    format: (a) => a.toString(),
    toJson: (a) => Number(a),
  };
}

// ---------------------------------------------------------------- the operations of docs/format.md

/**
 * Applies one DFG operation. Operands come in port order. add: sum; sub: first minus the others;
 * mul: product of the operands, then times the coefficient when one is given; gain: the single
 * operand times the coefficient; neg; pass. An operation without operands yields zero.
 */
export function applyOp<T>(ar: Arithmetic<T>, op: NodeOp, operands: T[], coefficient: Coefficient | null): T {
  if (operands.length === 0) return ar.zero;
  switch (op) {
    case 'add': {
      let acc = operands[0];
      for (let i = 1; i < operands.length; i++) acc = ar.add(acc, operands[i]);
      return acc;
    }
    case 'sub': {
      let acc = operands[0];
      for (let i = 1; i < operands.length; i++) acc = ar.sub(acc, operands[i]);
      return acc;
    }
    case 'mul': {
      let acc = operands[0];
      for (let i = 1; i < operands.length; i++) acc = ar.mul(acc, operands[i]);
      return coefficient === null ? acc : ar.scale(acc, coefficient);
    }
    case 'gain':
      return ar.scale(operands[0], coefficient ?? 1);
    case 'neg':
      return ar.neg(operands[0]);
    case 'pass':
      return operands[0];
  }
}

// ---------------------------------------------------------------- seeded input streams

/** mulberry32: a small, well-known 32-bit PRNG (public domain); deterministic for a seed. */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * One random integer stream per input node, uniform in [-2^(bits-1), 2^(bits-1)).
 * Streams depend only on the seed and the order of the inputs in the file.
 */
export function randomStreams(inputIds: string[], iterations: number, seed: number, bits: number): Record<string, bigint[]> {
  const rnd = seededRandom(seed);
  const span = 2 ** bits;
  const half = 2 ** (bits - 1);
  const out: Record<string, bigint[]> = {};
  for (const id of inputIds) {
    const s: bigint[] = new Array(iterations);
    for (let i = 0; i < iterations; i++) s[i] = BigInt(Math.floor(rnd() * span) - half);
    out[id] = s;
  }
  return out;
}
