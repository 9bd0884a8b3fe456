// Method: Q notation of fixed-point formats, in the convention that does not count the sign bit
// (common practice, no source: `Qm.n` is signed with m integer bits, n fraction bits and a sign
// bit, m + n + 1 bits in all; `UQm.n` is unsigned, m + n bits). A raw integer v of format Qm.n
// stands for v * 2^-n. docs/format.md, "Number formats".

/** A fixed-point format: signed or not, integer and fraction bits, and the word width. */
export interface NumberFormat {
  signed: boolean;
  int: number;
  frac: number;
  /** Word width: int + frac, plus the sign bit when signed. */
  bits: number;
}

export type RoundingMode = 'truncate' | 'round-half-up' | 'convergent';
export type OverflowMode = 'wrap' | 'saturate';
export const ROUNDING_MODES: readonly RoundingMode[] = ['truncate', 'round-half-up', 'convergent'];
export const OVERFLOW_MODES: readonly OverflowMode[] = ['wrap', 'saturate'];

/** Widest word a format may have: the RTL's data width and the engine's BigInt helpers stop there. */
export const MAX_FORMAT_BITS = 64;

/** The pattern the schema checks; parseNumberFormat adds the width limits. */
export const FORMAT_PATTERN = '^U?Q\\d{1,3}\\.\\d{1,3}$';

/** Parses `Q3.12` or `UQ1.15`; a string saying what is wrong otherwise. */
export function parseNumberFormat(text: string): NumberFormat | string {
  const m = /^(U?)Q(\d{1,3})\.(\d{1,3})$/.exec(text);
  if (!m) return `\`${text}\` is not a format in Q notation (write Qm.n for signed, UQm.n for unsigned, e.g. Q3.12)`;
  const signed = m[1] === '';
  const int = Number(m[2]);
  const frac = Number(m[3]);
  const bits = int + frac + (signed ? 1 : 0);
  if (bits < 1) return `\`${text}\` has no bits`;
  if (bits > MAX_FORMAT_BITS) return `\`${text}\` is ${bits} bits wide; formats have at most ${MAX_FORMAT_BITS} bits`;
  return { signed, int, frac, bits };
}

/** The format in Q notation. */
export function formatName(f: NumberFormat): string {
  return `${f.signed ? '' : 'U'}Q${f.int}.${f.frac}`;
}

/** The integer format of a W-bit two's-complement word: today's data format, Q(W-1).0. */
export function integerFormat(width: number): NumberFormat {
  return { signed: true, int: width - 1, frac: 0, bits: width };
}

/** Smallest and largest raw integer of a format. */
export function rawRange(f: NumberFormat): { min: bigint; max: bigint } {
  if (f.signed) return { min: -(1n << BigInt(f.bits - 1)), max: (1n << BigInt(f.bits - 1)) - 1n };
  return { min: 0n, max: (1n << BigInt(f.bits)) - 1n };
}
