// The fewest-register retiming: on random designs the reported retiming satisfies every constraint
// of docs/analysis.md (written out here from the design, not taken from the engine) and never needs
// more registers than the shortest-path solution; the min-cost flow's optimum is checked against
// a general-purpose LP solver (javascript-lp-solver, npm) on the same linear program.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { buildGraph, shortestPathsFromAll } from '../../shared/analysis/graph';
import { foldedDelays } from '../../shared/analysis/foldedDelay';
import { registerCounts } from '../../shared/analysis/registers';
import { retime, retimedDelays } from '../../shared/analysis/retiming';
import { retimingConstraints, satisfiesConstraints } from '../../shared/analysis/constraints';
import solver from 'javascript-lp-solver';
import { minCostPotentials, minRegisterRetiming } from '../../shared/analysis/minRegisterRetiming';
import { randomDesign } from '../support/randomDesign';
import { lpOptimum } from '../oracles/lpRetiming';
import { constraintsOf } from '../oracles/retimingConstraints';
import { applyRules, mergeRules } from '../../shared/report/rules';

/** Sum over edges with a folded delay of N * w_r(e) - stages(U) + slot(V) - slot(U) (docs/analysis.md). */
function totalRetimedFolded(a: ReturnType<typeof analyze>): number {
  let total = 0;
  for (const e of a.edges) if (e.retimedFoldedDelay !== null) total += e.retimedFoldedDelay;
  return total;
}

describe('fewest-register retiming (min-cost flow)', () => {
  it('reports a retiming that satisfies every constraint and never needs more registers than shortest paths', () => {
    let optimised = 0;
    let fewerRegisters = 0;
    let compared = 0;
    for (let seed = 1; seed <= 400; seed++) {
      const design = randomDesign(seed, { maxOps: 12, maxSlack: 3 });
      const a = analyze(design);
      if (!a.retiming.feasible || !a.retiming.needed) continue;
      compared++;
      const r = a.retiming.values;
      // Every constraint of docs/analysis.md, from the design: r(U) - r(V) <= floor(D_F / N) or <= w.
      for (const row of constraintsOf(design).rows) {
        expect(r[row.from] - r[row.to], `seed ${seed}: ${row.from} -> ${row.to}`).toBeLessThanOrEqual(row.bound);
      }
      for (const e of a.edges) {
        expect(e.retimedDelays).toBeGreaterThanOrEqual(0);
        if (e.retimedFoldedDelay !== null) expect(e.retimedFoldedDelay).toBeGreaterThanOrEqual(0);
      }
      // The shortest-path solution, as the engine gave it before the search for fewer registers.
      const g = buildGraph(design);
      const folded = foldedDelays(g);
      const sp = retime(g, folded, design.folding.latency ?? 'free', { minimiseRegisters: false });
      const spDelays = retimedDelays(g, sp.nodeRetiming!);
      const spCounts = registerCounts(g, foldedDelays(g, spDelays), spDelays).registers;
      expect(a.registers!.minimum, `seed ${seed}`).toBeLessThanOrEqual(spCounts.minimum);
      expect(totalRetimedFolded(a), `seed ${seed}`).toBeLessThanOrEqual(spCounts.perEdge);
      expect(a.registers!.perEdge).toBe(totalRetimedFolded(a));
      if (a.registers!.minimum === spCounts.minimum) {
        // Equal lifetime minimum: latency may not grow (docs/engine.md, which retiming).
        expect(a.retiming.latencyAdded).toBeLessThanOrEqual(sp.result.latencyAdded);
      }
      if (/^minimum-cost flow/.test(a.retiming.method ?? '')) optimised++;
      else expect(a.retiming.values).toEqual(sp.result.values);
      if (a.registers!.minimum < spCounts.minimum) fewerRegisters++;
    }
    // The check only means something when the search often changes the answer.
    expect(compared).toBeGreaterThan(200);
    expect(optimised).toBeGreaterThan(100);
    expect(fewerRegisters).toBeGreaterThan(80);
  });

  it('reaches the optimum of the linear program that javascript-lp-solver finds', () => {
    let checked = 0;
    for (let seed = 5000; seed < 5250; seed++) {
      const design = randomDesign(seed, { maxOps: 8, maxSlack: 2 });
      const g = buildGraph(design);
      const folded = foldedDelays(g);
      const latency = design.folding.latency ?? 'free';
      const cg = retimingConstraints(g, folded, latency);
      const sp = shortestPathsFromAll(cg.vars.count, cg.arcFrom, cg.arcTo, cg.weight);
      if (sp.cycle) continue;
      const start = sp.dist as Float64Array;
      const caps: (number | undefined)[] = [undefined];
      const twoBoundaries = cg.vars.hasInputs && cg.vars.hasOutputs && latency === 'free';
      if (twoBoundaries) caps.push(start[cg.vars.outputVar] - start[cg.vars.inputVar]);
      for (const [objective, maxLatency] of caps.flatMap((c) => [['edges', c], ['fanout', c]] as const)) {
        const sol = minRegisterRetiming(g, cg, folded, start, { maxLatency, objective });
        expect(sol, `seed ${seed}`).not.toBeNull();
        expect(satisfiesConstraints(cg, sol!.values)).toBe(true);
        if (maxLatency !== undefined) {
          expect(sol!.values[cg.vars.outputVar] - sol!.values[cg.vars.inputVar]).toBeLessThanOrEqual(maxLatency);
        }
        // Source: javascript-lp-solver (npm), simplex on the same LP; difference constraints are
        // totally unimodular, so the LP optimum is reached by an integer retiming.
        const reference = lpOptimum(design, objective, maxLatency);
        expect(reference, `seed ${seed}`).not.toBeNull();
        expect(sol!.objective, `seed ${seed}, ${objective}, cap ${maxLatency}`).toBeCloseTo(reference!, 6);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(200);
  });

  it('solves difference-constraint LPs with long reduced distances (past the bucket window) to the optimum javascript-lp-solver finds', () => {
    // Random feasible systems p(t) - p(h) <= c with costs in the thousands, so the searches'
    // distances pass the bucket queue's 256-key window and use its overflow. A ring makes every
    // supply reach every demand (the LP is bounded); hidden potentials make it feasible.
    let seed = 99;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let instance = 0; instance < 60; instance++) {
      const n = 6 + Math.floor(rnd() * 20);
      const hidden = Array.from({ length: n }, () => Math.floor(rnd() * 5000));
      const tails: number[] = [];
      const heads: number[] = [];
      const costs: number[] = [];
      const arc = (t: number, h: number) => {
        tails.push(t);
        heads.push(h);
        costs.push(hidden[t] - hidden[h] + Math.floor(rnd() * 4000));
      };
      for (let v = 0; v < n; v++) arc(v, (v + 1) % n);
      for (let k = 0; k < 2 * n; k++) arc(Math.floor(rnd() * n), Math.floor(rnd() * n));
      const coef = new Array<number>(n).fill(0);
      for (let k = 0; k < n; k++) {
        const a = Math.floor(rnd() * n);
        const b = Math.floor(rnd() * n);
        const units = 1 + Math.floor(rnd() * 5);
        coef[a] += units;
        coef[b] -= units;
      }
      const sp = shortestPathsFromAll(n, Int32Array.from(heads), Int32Array.from(tails), Float64Array.from(costs));
      expect(sp.cycle).toBeFalsy();
      const sol = minCostPotentials(n, tails, heads, costs, coef, Float64Array.from(sp.dist as Float64Array));
      expect(sol, `instance ${instance}`).not.toBeNull();
      let value = 0;
      for (let v = 0; v < n; v++) value += coef[v] * sol!.values[v];
      for (let k = 0; k < tails.length; k++) expect(sol!.values[tails[k]] - sol!.values[heads[k]]).toBeLessThanOrEqual(costs[k]);
      // Source: javascript-lp-solver (npm), simplex on the same LP. Its variables are
      // nonnegative; the coefficients sum to 0, so shifting every variable changes nothing.
      const constraints: Record<string, { max: number }> = {};
      const variables: Record<string, Record<string, number>> = {};
      for (let v = 0; v < n; v++) variables[`p${v}`] = { cost: coef[v] };
      tails.forEach((t, k) => {
        if (t === heads[k]) return;
        constraints[`c${k}`] = { max: costs[k] };
        variables[`p${t}`][`c${k}`] = 1;
        variables[`p${heads[k]}`][`c${k}`] = -1;
      });
      const reference = solver.Solve({ optimize: 'cost', opType: 'min', constraints, variables }) as { feasible: boolean; result: number };
      expect(reference.feasible).toBe(true);
      expect(value, `instance ${instance}`).toBeCloseTo(reference.result, 6);
    }
  });

  it('says when the fewest registers are not proven (a search out of its work budget)', () => {
    for (let seed = 1; seed < 400; seed++) {
      const d = randomDesign(seed, { maxOps: 10 });
      const a = analyze(d);
      if (!a.retiming.needed || !a.retiming.feasible) continue;
      expect(a.retiming.registersProven).toBeUndefined();
      const g = buildGraph(d);
      const starved = retime(g, foldedDelays(g), d.folding.latency ?? 'free', { budget: 1 });
      expect(starved.result.registersProven).toBe(false);
      expect(starved.result.method).toMatch(/not proven/);
      // ... and every report says so, whatever the rules (docs/cli.md, registers-not-proven).
      const warned = applyRules({ ...a, retiming: { ...a.retiming, registersProven: false } }, mergeRules(null, null).effective);
      expect(warned.warnings.map((w) => w.code)).toContain('registers-not-proven');
      expect(applyRules(a, mergeRules(null, null).effective).warnings.map((w) => w.code)).not.toContain('registers-not-proven');
      return;
    }
    throw new Error('no random design needed retiming');
  });

  it('keeps the shortest-path solution above the size bound and says so', () => {
    // The first random design that needs retiming, searched with a size bound of 1 edge.
    for (let seed = 1; seed < 400; seed++) {
      const d = randomDesign(seed, { maxOps: 10 });
      const a = analyze(d);
      if (!a.retiming.needed || !a.retiming.feasible) continue;
      const g = buildGraph(d);
      const folded = foldedDelays(g);
      const skipped = retime(g, folded, d.folding.latency ?? 'free', { maxEdges: 1 });
      const sp = retime(g, folded, d.folding.latency ?? 'free', { minimiseRegisters: false });
      expect(skipped.result.values).toEqual(sp.result.values);
      expect(skipped.result.method).toMatch(/skipped because the design has \d+ edges, more than 1$/);
      return;
    }
    throw new Error('no random design needed retiming');
  });
});
