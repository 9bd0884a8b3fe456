// The exact planner against outside references: an exhaustive enumeration of every folding-set
// assignment written in this test and scored by the engine's own analyze, and a published folding.
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { randomDesign } from '../support/randomDesign';
import { exhaustiveMinimum } from '../oracles/exhaustivePlan';
import { planDesign } from '../../shared/planning/plan';
import type { MilpSolver } from '../../shared/planning/types';
import type { Design } from '../../shared/types';
import { parhiIirFolded } from '../fixtures/published/parhi-iir-folded';
import { highsSolver } from '../../solvers/highs';
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
