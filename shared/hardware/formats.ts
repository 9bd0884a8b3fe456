// The number format, rounding and overflow mode of every signal of a design (docs/format.md,
// "Number formats"): the node's own, else the design's `fixed_point` defaults, else today's
// integer datapath Q(W-1).0, truncate, wrap.
import { integerFormat, parseNumberFormat, type NumberFormat, type OverflowMode, type RoundingMode } from '../design/numberFormat';
import type { Design } from '../types';

export interface SignalFormat {
  format: NumberFormat;
  rounding: RoundingMode;
  overflow: OverflowMode;
}

export interface FormatPlan {
  /** By node index of design.nodes. */
  signals: SignalFormat[];
  /** Whether the file names any format, rounding or overflow mode (else today's integer datapath). */
  declared: boolean;
  /** Width of the RTL's data word: every format fits in it as a two's-complement number. */
  container: number;
}

/** The formats of every node; `width` is the data width of today's default Q(W-1).0. */
export function formatPlan(design: Design, width: number): FormatPlan {
  const fp = design.fixedPoint ?? {};
  const parse = (t: string | undefined): NumberFormat | null => {
    if (t === undefined) return null;
    const f = parseNumberFormat(t);
    // Validation refuses a bad format; the integer datapath stands in should one get here.
    return typeof f === 'string' ? null : f;
  };
  const base = parse(fp.format) ?? integerFormat(width);
  let declared = design.fixedPoint !== undefined;
  let container = 2;
  const signals = design.nodes.map((n): SignalFormat => {
    if (n.format !== undefined || n.rounding !== undefined || n.overflow !== undefined) declared = true;
    const format = parse(n.format) ?? base;
    container = Math.max(container, format.bits + (format.signed ? 0 : 1));
    return { format, rounding: n.rounding ?? fp.rounding ?? 'truncate', overflow: n.overflow ?? fp.overflow ?? 'wrap' };
  });
  return { signals, declared, container: declared ? container : width };
}
