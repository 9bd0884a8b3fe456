// Method: requantisation of a two's-complement integer to a fixed-point format: dropping
// fraction bits by a rounding mode, then fitting the integer range by an overflow mode
// (docs/rtl.md, "Arithmetic"). Rounding modes (common practice, no source):
//   truncate       floor(x / 2^d): drop the bits (toward minus infinity)
//   round-half-up  floor(x / 2^d + 1/2): ties toward plus infinity
//   convergent     nearest, ties to the even neighbour (IEEE 754 roundTiesToEven)
import { rawRange, type NumberFormat, type OverflowMode, type RoundingMode } from '../design/numberFormat';

/** x * 2^-d rounded to an integer by `mode`; d <= 0 shifts left, which is exact. */
export function shiftRound(x: bigint, d: number, mode: RoundingMode): bigint {
  if (d <= 0) return x << BigInt(-d);
  const D = BigInt(d);
  const half = 1n << (D - 1n);
  switch (mode) {
    case 'truncate':
      return x >> D; // BigInt >> is floor, as an arithmetic shift of two's complement
    case 'round-half-up':
      return (x + half) >> D;
    case 'convergent':
      // half - 1 rounds every non-tie to nearest; the kept LSB adds one more on a tie when odd.
      return (x + half - 1n + ((x >> D) & 1n)) >> D;
  }
}

// The range of each format object, computed once: fitFormat runs on every fixed-point result.
const ranges = new WeakMap<NumberFormat, { min: bigint; max: bigint }>();

/** x fitted into the range of f: wrapped modulo 2^bits or saturated; `overflow` when x was outside. */
export function fitFormat(x: bigint, f: NumberFormat, mode: OverflowMode): { value: bigint; overflow: boolean } {
  let range = ranges.get(f);
  if (!range) ranges.set(f, (range = rawRange(f)));
  const { min, max } = range;
  if (x >= min && x <= max) return { value: x, overflow: false };
  if (mode === 'saturate') return { value: x < min ? min : max, overflow: true };
  return { value: f.signed ? BigInt.asIntN(f.bits, x) : BigInt.asUintN(f.bits, x), overflow: true };
}
