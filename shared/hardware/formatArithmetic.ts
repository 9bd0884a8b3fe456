// Fixed point with a format per signal (docs/rtl.md, "Arithmetic"): raw two's-complement
// integers, each in its producer's format. A node computes its result at full precision from
// its operands (aligned to the finest fraction for add and sub), then requantises it once to its
// own format (rounding, then overflow); a mul with a coefficient does so after the signal
// product and again after the coefficient, as the RTL does. Convention: a raw integer v of a
// format with n fraction bits stands for v * 2^-n.
import { quantizeCoefficient, type Arithmetic, type Coefficient, type FixedFormat } from './arith';
import type { FormatPlan, SignalFormat } from './formats';
import type { ResolvedGraph } from './reference';
import { fitFormat, shiftRound } from './quantize';
import type { Design, NodeOp } from '../types';

/** Overflows of one node: how many results fell outside its format, and when the first did. */
export interface OverflowRecord {
  count: number;
  /** Iteration (reference) or cycle (folded datapath) of the first. */
  first: number;
}

export interface FormatArithmetic extends Arithmetic<bigint> {
  /** Overflows so far, by node id. */
  readonly overflows: Map<string, OverflowRecord>;
}

export function formatArithmetic(design: Design, graph: ResolvedGraph, plan: FormatPlan, fixed: FixedFormat): FormatArithmetic {
  const F = fixed.coefFrac;
  const W = plan.container;
  const byId = new Map<string, { sf: SignalFormat; operandFrac: number[] }>();
  design.nodes.forEach((n, i) => {
    const operandFrac = graph.nodes[i].operands.map((e) => plan.signals[graph.index.get(design.edges[e].from)!].format.frac);
    byId.set(n.id, { sf: plan.signals[i], operandFrac });
  });
  const coefs = new Map<Coefficient, bigint>();
  const quant = (c: Coefficient) => {
    let q = coefs.get(c);
    if (q === undefined) {
      q = quantizeCoefficient(c, F);
      coefs.set(c, q);
    }
    return q;
  };
  const overflows = new Map<string, OverflowRecord>();
  const fit = (id: string, sf: SignalFormat, x: bigint, frac: number, at: number): bigint => {
    const r = fitFormat(shiftRound(x, frac - sf.format.frac, sf.rounding), sf.format, sf.overflow);
    if (r.overflow) {
      const o = overflows.get(id);
      if (o) o.count++;
      else overflows.set(id, { count: 1, first: at });
    }
    return r.value;
  };
  const wrap = (v: bigint) => BigInt.asIntN(W, v);
  return {
    name: 'fixed',
    zero: 0n,
    overflows,
    fromInt: (n) => n,
    add: (a, b) => wrap(a + b),
    sub: (a, b) => wrap(a - b),
    neg: (a) => wrap(-a),
    mul: (a, b) => wrap(a * b),
    scale: (a, c) => wrap((a * quant(c)) >> BigInt(F)),
    equals: (a, b) => a === b,
    format: (a) => a.toString(),
    toJson: (a) => Number(a),
    node(id: string, op: NodeOp, xs: bigint[], coefficient: Coefficient | null, at: number): bigint {
      const { sf, operandFrac: fr } = byId.get(id)!;
      switch (op) {
        case 'add':
        case 'sub': {
          const fa = Math.max(...fr.slice(0, xs.length));
          let acc = xs[0] << BigInt(fa - fr[0]);
          for (let k = 1; k < xs.length; k++) {
            const v = xs[k] << BigInt(fa - fr[k]);
            acc = op === 'add' ? acc + v : acc - v;
          }
          return fit(id, sf, acc, fa, at);
        }
        case 'mul': {
          let acc = xs[0];
          let frac = fr[0];
          for (let k = 1; k < xs.length; k++) {
            acc *= xs[k];
            frac += fr[k];
          }
          if (coefficient === null) return fit(id, sf, acc, frac, at);
          const p = fit(id, sf, acc, frac, at);
          return fit(id, sf, p * quant(coefficient), sf.format.frac + F, at);
        }
        case 'gain':
          return fit(id, sf, xs[0] * quant(coefficient ?? 1), fr[0] + F, at);
        case 'neg':
          return fit(id, sf, -xs[0], fr[0], at);
        case 'pass':
          return fit(id, sf, xs[0], fr[0], at);
      }
    },
    output(id: string, value: bigint, at: number): bigint {
      const { sf, operandFrac } = byId.get(id)!;
      return fit(id, sf, value, operandFrac[0] ?? sf.format.frac, at);
    },
  };
}
