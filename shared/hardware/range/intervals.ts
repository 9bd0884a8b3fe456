// Method: interval arithmetic through the DFG (common practice, no source): each node's range
// from its operands' ranges (sum of bounds, products of the four corners, a coefficient scales
// and may swap them); a delayed value lies in its source's range or is the zero of the start.
// Loops are iterated until the ranges stop growing; a loop whose ranges keep growing has no bound.
import type { ResolvedGraph } from '../reference';
import type { Design } from '../../types';
import { decimalOf, decimalToFraction } from '../arith';

export interface Interval {
  lo: number;
  hi: number;
}

/** Rounds of iteration through loops before the ranges are declared unbounded. */
export const MAX_ROUNDS = 256;

const coefValue = (c: number | string | null): number => {
  if (c === null) return 1;
  const q = decimalToFraction(decimalOf(c));
  return Number(q.num) / Number(q.den);
};

function mulI(a: Interval, b: Interval): Interval {
  const c = [a.lo * b.lo, a.lo * b.hi, a.hi * b.lo, a.hi * b.hi];
  return { lo: Math.min(...c), hi: Math.max(...c) };
}
function scaleI(a: Interval, k: number): Interval {
  return k >= 0 ? { lo: a.lo * k, hi: a.hi * k } : { lo: a.hi * k, hi: a.lo * k };
}

/** Ranges of every node (index of design.nodes) from the ranges of the inputs; null when a loop has no bound. */
export function intervalRanges(design: Design, graph: ResolvedGraph, inputRange: (node: number) => Interval): { ranges: Interval[] | null; rounds: number } {
  const n = graph.nodes.length;
  const src = design.edges.map((e) => graph.index.get(e.from)!);
  const r: Interval[] = Array.from({ length: n }, () => ({ lo: 0, hi: 0 }));
  for (let round = 1; round <= MAX_ROUNDS; round++) {
    let changed = false;
    for (const v of graph.order) {
      const node = graph.nodes[v];
      let x: Interval;
      if (node.kind === 'input') x = inputRange(v);
      else {
        // A delayed operand is its source's range or the zero state; zero-delay edges go forward in `order`.
        const ops = node.operands.map((e) => {
          const s = r[src[e]];
          return design.edges[e].delays > 0 ? { lo: Math.min(0, s.lo), hi: Math.max(0, s.hi) } : s;
        });
        if (node.kind === 'output') x = ops[0] ?? { lo: 0, hi: 0 };
        else {
          switch (node.op!) {
            case 'add':
              x = ops.reduce((a, b) => ({ lo: a.lo + b.lo, hi: a.hi + b.hi }));
              break;
            case 'sub':
              x = ops.slice(1).reduce((a, b) => ({ lo: a.lo - b.hi, hi: a.hi - b.lo }), ops[0]);
              break;
            case 'neg':
              x = { lo: -ops[0].hi, hi: -ops[0].lo };
              break;
            case 'pass':
              x = ops[0];
              break;
            case 'gain':
              x = scaleI(ops[0], coefValue(node.coefficient));
              break;
            case 'mul':
              x = ops.reduce(mulI);
              if (node.coefficient !== null) x = scaleI(x, coefValue(node.coefficient));
              break;
          }
        }
      }
      // Ranges only widen: a loop's value at a later iteration may be anything seen before.
      const lo = Math.min(r[v].lo, x.lo);
      const hi = Math.max(r[v].hi, x.hi);
      if (lo !== r[v].lo || hi !== r[v].hi) {
        changed = true;
        r[v] = { lo, hi };
      }
    }
    if (!changed) return { ranges: r, rounds: round };
    if (r.some((i) => !Number.isFinite(i.lo) || !Number.isFinite(i.hi))) break;
  }
  return { ranges: null, rounds: MAX_ROUNDS };
}
