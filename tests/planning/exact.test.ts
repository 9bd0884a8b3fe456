// The exact planner against outside references: an exhaustive enumeration of every folding-set
// assignment written in this test and scored by the engine's own analyze, and a published folding.
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analyze';
import { randomDesign } from '../engine/helpers';
import { planDesign } from '../../shared/planning/plan';
import type { MilpSolver } from '../../shared/planning/types';
import type { Design } from '../../shared/types';
import { parhiIirFolded } from '../fixtures/published/parhi-iir-folded';
import { highsSolver } from './highsSolver';
import { planProblems } from './checks';

let solver: MilpSolver;
beforeAll(async () => {
  solver = await highsSolver(); // the real `highs` npm package (WebAssembly)
});

const bare = (d: Design): Design => ({ ...d, folding: { ...d.folding, sets: {} } });
const isOp = (kind: string) => kind !== 'input' && kind !== 'output';

/**
 * Every assignment of the operations to (unit of their kind, partition), no cell used twice,
 * scored by analyze: the fewest registers (lifetime-analysis minimum) over the feasible ones,
 * Infinity when none is feasible. null when there are more than `limit` assignments.
 */
function exhaustiveMinimum(d: Design, limit: number): { registers: number; count: number } | null {
  const N = d.folding.factor;
  const ops = d.nodes.filter((n) => isOp(n.kind));
  const cells = ops.map((op) => d.units.filter((u) => u.kind === op.kind).flatMap((u) => Array.from({ length: N }, (_, t) => [u.id, t] as const)));
  let total = 1;
  for (const c of cells) {
    total *= c.length;
    if (total > limit * 50) return null;
  }
  const used = new Set<string>();
  const choice: (readonly [string, number])[] = [];
  let best = Infinity;
  let count = 0;
  const visit = (i: number): boolean => {
    if (i === ops.length) {
      if (++count > limit) return false;
      const sets: Record<string, (string | null)[]> = Object.fromEntries(d.units.map((u) => [u.id, new Array<string | null>(N).fill(null)]));
      choice.forEach(([u, t], k) => (sets[u][t] = ops[k].id));
      const a = analyze({ ...d, folding: { ...d.folding, sets } }, { maxAllocationCells: 0 });
      if (a.retiming.feasible && a.registers) best = Math.min(best, a.registers.minimum);
      return true;
    }
    for (const c of cells[i]) {
      const key = `${c[0]}@${c[1]}`;
      if (used.has(key)) continue;
      used.add(key);
      choice.push(c);
      const go = visit(i + 1);
      choice.pop();
      used.delete(key);
      if (!go) return false;
    }
    return true;
  };
  if (!visit(0)) return null;
  return { registers: best, count };
}

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
