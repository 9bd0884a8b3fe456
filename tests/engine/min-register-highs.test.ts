// The fewest-register retiming at scale against HiGHS (the `highs` npm package, an LP/MIP solver
// independent of the engine): the optimum of the linear program of docs/engine.md ('edges'
// objective, free latency) written out from the design alone (tests/oracles/retimingConstraints.ts), against
// the engine's min-cost flow on the same design. Difference constraints are totally unimodular,
// so the LP optimum is the integer optimum the flow must reach.
import { describe, expect, it } from 'vitest';
import { buildGraph, shortestPathsFromAll } from '../../shared/analysis/graph';
import { foldedDelays } from '../../shared/analysis/foldedDelay';
import { retimingConstraints, satisfiesConstraints } from '../../shared/analysis/constraints';
import { minRegisterRetiming } from '../../shared/analysis/minRegisterRetiming';
import { highsSolver } from '../../solvers/highs';
import { loadDesign } from '../../shared/design/load';
import type { Design } from '../../shared/types';
import { generateDesign } from '../../scripts/gen-design.mjs';
import { randomDesign } from '../support/randomDesign';
import { constraintsOf } from '../oracles/retimingConstraints';
import { transposedFir } from '../support/fir';

/** CPLEX-LP text: min sum over folded edges of r(V) - r(U), subject to r(U) - r(V) <= bound, variables free. */
function lpText(design: Design): string {
  const { rows, variable } = constraintsOf(design);
  const coef = new Map<string, number>();
  const names = new Set<string>();
  const subject: string[] = [];
  rows.forEach((row, k) => {
    const u = variable(row.from);
    const v = variable(row.to);
    names.add(u).add(v);
    if (row.folded) {
      coef.set(v, (coef.get(v) ?? 0) + 1);
      coef.set(u, (coef.get(u) ?? 0) - 1);
    }
    if (u !== v) subject.push(` c${k}: ${u} - ${v} <= ${row.bound}`);
  });
  const terms = [...coef].filter(([, c]) => c !== 0).map(([v, c]) => `${c >= 0 ? '+' : '-'} ${Math.abs(c)} ${v}`);
  return ['Minimize', ` obj: ${terms.length ? terms.join(' ') : '0 r_inputs'}`, 'Subject To', ...subject, 'Bounds', ...[...names].map((n) => ` ${n} free`), 'End', ''].join('\n');
}

function flowOptimum(design: Design): number | null {
  const g = buildGraph(design);
  const folded = foldedDelays(g);
  const cg = retimingConstraints(g, folded, design.folding.latency ?? 'free');
  const sp = shortestPathsFromAll(cg.vars.count, cg.arcFrom, cg.arcTo, cg.weight);
  if (sp.cycle) return null;
  const sol = minRegisterRetiming(g, cg, folded, Float64Array.from(sp.dist as Float64Array), { objective: 'edges' });
  expect(sol).not.toBeNull();
  expect(satisfiesConstraints(cg, sol!.values)).toBe(true);
  return sol!.objective;
}

const highs = highsSolver();

async function highsOptimum(design: Design): Promise<number> {
  const r = await highs.solve(lpText(design), { timeLimitSeconds: 120 });
  expect(r.status, r.message).toBe('optimal');
  return r.objective!;
}

describe('fewest-register retiming against HiGHS', () => {
  it('a 3,000-tap transposed FIR (about 9,000 edges) at N = 8 and N = 3: the same optimum', async () => {
    for (const factor of [8, 3]) {
      const design = transposedFir(3000, factor);
      // Source: HiGHS (npm `highs`), dual simplex on the same LP.
      expect(flowOptimum(design), `N = ${factor}`).toBe(await highsOptimum(design));
    }
  }, 120_000);

  it('generated resonator banks of about 10,000 edges and random designs: the same optimum', async () => {
    const banks = [3, 11].map((seed) => loadDesign(generateDesign({ edges: 10_000, seed, name: `bank-${seed}` }).text).design!);
    let compared = 0;
    for (const design of banks) {
      expect(flowOptimum(design)).toBe(await highsOptimum(design));
      compared++;
    }
    for (let seed = 700; seed < 760; seed++) {
      const design = randomDesign(seed, { maxOps: 40, maxSlack: 2 });
      const mine = flowOptimum(design);
      if (mine === null) continue; // no retiming exists: nothing to minimise
      // Source: HiGHS (npm `highs`).
      expect(mine, `seed ${seed}`).toBeCloseTo(await highsOptimum(design), 6);
      compared++;
    }
    expect(compared).toBeGreaterThan(30);
  }, 300_000);
});
