// Bit growth: the worst-case range of every signal from the input formats and the coefficients,
// and the signals whose format is too narrow for it (docs/analysis.md, "Bit growth"). A linear
// graph is bounded by its impulse responses (tight, loops included); a graph with products of
// signals by interval arithmetic. Ranges are of the exact values; rounding adds at most a few
// LSBs, which the formats' own rounding decides.
import type { Design, Diagnostic } from '../../types';
import { formatName, rawRange } from '../../design/numberFormat';
import type { FormatPlan } from '../formats';
import type { ResolvedGraph } from '../reference';
import { impulseSums, isLinear } from './impulse';
import { intervalRanges, type Interval } from './intervals';

export interface SignalRange {
  node: string;
  format: string;
  /** Worst-case range of the exact value. */
  lo: number;
  hi: number;
  /** Smallest integer bits of the node's signedness and fraction bits that hold the range. */
  neededInt: number;
  tooNarrow: boolean;
}

export interface BitGrowth {
  method: 'impulse-response' | 'interval' | 'none';
  /** Why there is no bound (method none). */
  reason?: string;
  signals: SignalRange[];
  diagnostics: Diagnostic[];
}

/** Smallest integer bits for [lo, hi]; Infinity when an unsigned format cannot hold lo < 0. */
function neededIntBits(lo: number, hi: number, signed: boolean): number {
  if (!signed && lo < 0) return Infinity;
  // Exact values up to one LSB past the largest code count as held: rounding decides that LSB.
  for (let m = 0; m < 1100; m++) {
    if (hi < 2 ** m && (signed ? lo >= -(2 ** m) : true)) return m;
  }
  return Infinity;
}

export function bitGrowth(design: Design, graph: ResolvedGraph, plan: FormatPlan): BitGrowth {
  const fmt = (i: number) => plan.signals[i].format;
  const inputRange = (i: number): Interval => {
    const f = fmt(i);
    const { min, max } = rawRange(f);
    return { lo: Number(min) * 2 ** -f.frac, hi: Number(max) * 2 ** -f.frac };
  };
  let ranges: Interval[] | null = null;
  let method: BitGrowth['method'];
  let reason: string | undefined;
  if (isLinear(graph)) {
    method = 'impulse-response';
    const imp = impulseSums(design, graph);
    if (imp.unbounded) reason = imp.unbounded;
    else {
      ranges = graph.nodes.map(() => ({ lo: 0, hi: 0 }));
      for (const [x, s] of imp.byInput) {
        const { lo, hi } = inputRange(x);
        for (let v = 0; v < ranges.length; v++) {
          ranges[v].hi += s.pos[v] * hi + s.neg[v] * lo;
          ranges[v].lo += s.pos[v] * lo + s.neg[v] * hi;
        }
      }
    }
  } else {
    method = 'interval';
    const r = intervalRanges(design, graph, inputRange);
    ranges = r.ranges;
    if (!ranges) reason = `the ranges of a loop with products of signals keep growing after ${r.rounds} rounds of interval arithmetic`;
  }
  if (!ranges) return { method: 'none', reason, signals: [], diagnostics: [] };
  const signals: SignalRange[] = [];
  const diagnostics: Diagnostic[] = [];
  graph.nodes.forEach((node, i) => {
    if (node.kind === 'input') return;
    const f = fmt(i);
    const { lo, hi } = ranges![i];
    const neededInt = neededIntBits(lo, hi, f.signed);
    const tooNarrow = neededInt > f.int;
    const name = formatName(f);
    signals.push({ node: node.id, format: name, lo, hi, neededInt, tooNarrow });
    if (tooNarrow) {
      const fix = Number.isFinite(neededInt) ? `; ${f.signed ? 'Q' : 'UQ'}${neededInt}.${f.frac} holds it` : '; it takes negative values: give it a signed format';
      diagnostics.push({
        severity: 'warning',
        code: 'format-too-narrow',
        message: `\`${node.id}\` can reach [${show(lo)}, ${show(hi)}] (bit growth by ${method === 'impulse-response' ? 'its impulse responses' : 'interval arithmetic'}), beyond ${name}${fix}`,
        line: null,
        column: null,
        path: ['nodes', i],
      });
    }
  });
  return { method, signals, diagnostics };
}

function show(x: number): string {
  if (Number.isInteger(x)) return String(x);
  const t = x.toPrecision(6);
  // Trailing zeros of a fraction only: 111040 keeps its zero.
  return t.includes('.') && !t.includes('e') ? t.replace(/\.?0+$/, '') : t;
}
