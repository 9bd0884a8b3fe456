// Retiming feasibility against a general-purpose LP solver (javascript-lp-solver, npm): a system
// of difference constraints with integer bounds has an integer solution exactly when its LP
// relaxation is feasible (its matrix is totally unimodular), so the two must always agree.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';
import { randomDesign } from '../support/randomDesign';
import { lpFeasible } from '../oracles/lpRetiming';

describe('retiming feasibility agrees with an LP solver (javascript-lp-solver)', () => {
  it('on 300 random designs, both feasible and infeasible', () => {
    let feasibleNeeded = 0;
    let infeasible = 0;
    for (let seed = 1; seed <= 300; seed++) {
      const design = randomDesign(seed, { maxOps: 12, maxSlack: 2 });
      const a = analyze(design);
      // Source: javascript-lp-solver (npm), simplex on the LP relaxation of the same constraints.
      expect(a.retiming.feasible, `seed ${seed}`).toBe(lpFeasible(design));
      if (!a.retiming.feasible) infeasible++;
      else if (a.retiming.needed) feasibleNeeded++;
    }
    // The comparison only means something when both outcomes occur often.
    expect(feasibleNeeded).toBeGreaterThan(40);
    expect(infeasible).toBeGreaterThan(15);
  });

  it('with fixed latency and inputs/outputs at chosen slots', () => {
    let infeasible = 0;
    for (let seed = 1000; seed < 1200; seed++) {
      const base = randomDesign(seed, { maxOps: 8 });
      const design: Design = { ...base, folding: { ...base.folding, latency: 'fixed' } };
      const a = analyze(design);
      // Source: javascript-lp-solver (npm) on the same constraints with one boundary variable.
      expect(a.retiming.feasible, `seed ${seed}`).toBe(lpFeasible(design));
      if (!a.retiming.feasible) infeasible++;
    }
    expect(infeasible).toBeGreaterThan(10);
  });
});
