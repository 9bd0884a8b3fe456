// The exact planner against outside references: an exhaustive enumeration of every folding-set
// assignment written in this test and scored by the engine's own analyze, and a published folding.
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { randomDesign } from '../support/randomDesign';
import { exhaustiveMinimum } from '../oracles/exhaustivePlan';
import { planDesign } from '../../shared/planning/plan';
import { exactPlan } from '../../shared/planning/exact';
import { buildProblem } from '../../shared/planning/problem';
import type { MilpSolver } from '../../shared/planning/types';
import type { Design } from '../../shared/types';
import { parhiIirFolded } from '../fixtures/published/parhi-iir-folded';
import { highsSolver } from '../../solvers/highs';
import { loadDesign } from '../../shared/design/load';
import { readFileSync } from 'node:fs';
import { planProblems } from '../oracles/planChecks';

let solver: MilpSolver;
beforeAll(async () => {
  solver = highsSolver(); // the one adapter of the real `highs` npm package (WebAssembly), as pleat plan uses
});

const bare = (d: Design): Design => ({ ...d, folding: { ...d.folding, sets: {} } });

describe('exact search against exhaustive enumeration (independent brute force in this test)', () => {
  it('matches the fewest registers on small random designs (<= 6 operations, N <= 4)', async () => {
    let compared = 0;
    let infeasible = 0;
    for (let seed = 1; compared < 10 && seed < 400; seed++) {
      const d = randomDesign(seed, { maxOps: 6, maxSlack: 1, maxStages: 2, maxDelays: 2 });
      if (d.folding.factor > 4) continue;
      const ex = exhaustiveMinimum(d, 1500);
      if (!ex) continue;
      compared++;
      const plan = await planDesign(bare(d), { factor: d.folding.factor, units: d.units, objective: 'registers', timeLimitSeconds: 120, solver });
      const heuristic = await planDesign(bare(d), { factor: d.folding.factor, units: d.units, objective: 'registers', timeLimitSeconds: 20 });
      const where = `seed ${seed}: ${JSON.stringify(plan.notes)}`;
      if (ex.registers === Infinity) {
        infeasible++;
        expect(plan.status, where).toBe('infeasible');
        expect(heuristic.status, where).toBe('infeasible');
        continue;
      }
      // Source: the enumeration above (every assignment, scored by analyze).
      expect(plan.status, where).toBe('optimal');
      expect(plan.objective!.registers, where).toBe(ex.registers);
      expect(plan.bound!.registers, where).toBeLessThanOrEqual(ex.registers);
      expect(planProblems(d, plan), where).toEqual([]);
      // the heuristic alone: a feasible plan, never better than the optimum
      expect(heuristic.status, where).not.toBe('infeasible');
      expect(heuristic.objective!.registers, where).toBeGreaterThanOrEqual(ex.registers);
      expect(planProblems(d, heuristic), where).toEqual([]);
    }
    expect(compared).toBe(10);
    expect(infeasible).toBeLessThan(compared);
  }, 900_000);
});

describe('the exact model alone against the same enumeration (no heuristic plan handed in)', () => {
  // Without a known plan the model first finds any plan (feasibility model), then the full model
  // starts from it: this exercises decoding, unit classes and cuts without the heuristic's help.
  const exactAlone = (d: Design) =>
    exactPlan(buildProblem(d, d.folding.factor, d.units), { objective: 'registers', solver, timeLimitSeconds: 120, incumbent: null, incumbentSets: null, now: Date.now, deadline: Date.now() + 120_000 });

  it('finds the fewest registers and proves it, with and without pins', async () => {
    let compared = 0;
    let pinned = 0;
    for (let seed = 1; compared < 10 && seed < 400; seed++) {
      const d = randomDesign(seed, { maxOps: 6, maxSlack: 1, maxStages: 2, maxDelays: 2 });
      if (d.folding.factor > 4) continue;
      const ex = exhaustiveMinimum(d, 1500);
      if (!ex || ex.registers === Infinity) continue;
      compared++;
      const r = await exactAlone(bare(d));
      const where = `seed ${seed}: ${JSON.stringify(r.notes)}`;
      // Source: the enumeration above (every assignment, scored by analyze).
      expect(r.metrics?.registers, where).toBe(ex.registers);
      expect(r.provenOptimal, where).toBe(true);
      expect(r.bound, where).toBe(ex.registers);
      // half of the design's own (feasible) placement kept as pins: the optimum among the assignments that keep them
      if (!analyze(d, { maxAllocationCells: 0 }).retiming.feasible) continue;
      const pins: Record<string, (string | null)[]> = {};
      let k = 0;
      for (const [unit, list] of Object.entries(d.folding.sets)) pins[unit] = list.map((id) => (id !== null && k++ % 2 === 0 ? id : null));
      const exPinned = exhaustiveMinimum(d, 1500, pins);
      if (!exPinned || exPinned.registers === Infinity) continue;
      pinned++;
      const rp = await exactAlone({ ...d, folding: { ...d.folding, sets: pins } });
      expect(rp.metrics?.registers, `${where} (pinned)`).toBe(exPinned.registers);
      expect(rp.provenOptimal).toBe(true);
      for (const [unit, list] of Object.entries(pins)) list.forEach((id, t) => id !== null && expect(rp.sets![unit][t]).toBe(id));
    }
    expect(compared).toBe(10);
    expect(pinned).toBeGreaterThan(3);
  }, 900_000);
});

describe('a published folding: the retimed second-order IIR section (Parhi 1999, ch. 6, from memory)', () => {
  const published = parhiIirFolded();
  // Source: Parhi 1999, ch. 6: the published folding needs 2 registers by lifetime analysis.
  const publishedRegisters = 2;

  it('the published folding scores as the book says', () => {
    expect(analyze(published).registers?.minimum).toBe(publishedRegisters);
  });

  it('the exact plan from no sets at all is at least as good, and optimal', async () => {
    const plan = await planDesign(bare(published), { factor: 4, units: published.units, objective: 'registers', timeLimitSeconds: 120, solver });
    expect(plan.status).toBe('optimal');
    expect(plan.objective!.registers).toBeLessThanOrEqual(publishedRegisters);
    expect(planProblems(published, plan)).toEqual([]);
  }, 300_000);

  it('the heuristic plan is at least as good', async () => {
    const plan = await planDesign(bare(published), { factor: 4, units: published.units, objective: 'registers', timeLimitSeconds: 20 });
    expect(plan.status).not.toBe('infeasible');
    expect(plan.objective!.registers).toBeLessThanOrEqual(publishedRegisters);
    expect(planProblems(published, plan)).toEqual([]);
  }, 120_000);
});

describe('labels tell what found and what proved a plan', () => {
  const examples = new URL('../../examples/', import.meta.url);
  const { design } = loadDesign(readFileSync(new URL('channelizer-taps.fold.yaml', examples), 'utf8'));
  const d = bare(design!);
  const options = { factor: d.folding.factor, units: d.units, objective: 'registers' as const, timeLimitSeconds: 60 };

  it('a solver that answers nothing leaves the heuristic\'s plan, its label and its gap', async () => {
    // the real adaptor refusing every model (its size limit), so no model is ever solved
    const refusing = highsSolver({ maxModelChars: 10 });
    const plan = await planDesign(d, { ...options, solver: refusing });
    expect(plan.method).toMatch(/^heuristic/);
    expect(plan.notes?.join(' ')).toContain('the exact model gave no answer');
    // the loop bound alone (0 registers here) does not meet the plan: no proof, a gap
    expect(plan.bound?.registers).toBeLessThan(plan.objective!.registers);
    expect(plan.status).toBe('feasible');
    expect(plan.gapPercent).toBeGreaterThan(0);
    expect(planProblems(design!, plan)).toEqual([]);
  }, 120_000);

  it('with the solver the same plan is proven optimal, and the method still names who found it', async () => {
    const plan = await planDesign(d, { ...options, solver });
    expect(plan.status).toBe('optimal');
    expect(plan.bound?.registers).toBe(plan.objective!.registers);
    if (plan.method.startsWith('heuristic')) expect(plan.notes?.join(' ')).toMatch(/proves it optimal/);
    else expect(plan.method).toMatch(/^exact: mixed-integer model \(HiGHS\)/);
    expect(planProblems(design!, plan)).toEqual([]);
  }, 120_000);
});
