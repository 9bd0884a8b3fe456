// Retiming feasibility against a general-purpose LP solver (javascript-lp-solver, npm): a system
// of difference constraints with integer bounds has an integer solution exactly when its LP
// relaxation is feasible (its matrix is totally unimodular), so the two must always agree.
import { describe, expect, it } from 'vitest';
import solver from 'javascript-lp-solver';
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';
import { constraintsOf, randomDesign } from './helpers';

/**
 * Feasibility by the LP solver of the constraints restated in helpers.ts (constraintsOf):
 * one variable per operation, one shared by all inputs, one by all outputs;
 * r(U) - r(V) <= floor(D_F / N), or <= w for a tap into an output without slot.
 */
function lpFeasible(design: Design): boolean {
  const { rows, variable } = constraintsOf(design);
  const constraints: Record<string, { max: number }> = {};
  let selfConflict = false;
  const variables: Record<string, Record<string, number>> = {};
  const coefficient = (v: string, c: string, x: number) => {
    variables[v] ??= { cost: 1 };
    variables[v][c] = (variables[v][c] ?? 0) + x;
  };
  rows.forEach(({ from, to, bound }, k) => {
    if (variable(from) === variable(to)) {
      // A constraint on one variable with itself reads 0 <= bound; the solver mishandles rows
      // whose only coefficient is an explicit 0, so it is decided here.
      if (bound < 0) selfConflict = true;
      return;
    }
    const name = `c${k}`;
    constraints[name] = { max: bound };
    coefficient(variable(from), name, 1);
    coefficient(variable(to), name, -1);
  });
  if (selfConflict) return false;
  // Difference constraints do not change when every variable moves by the same amount, so the
  // solver's default nonnegative variables lose no solution; minimising their sum keeps it bounded.
  const result = solver.Solve({ optimize: 'cost', opType: 'min', constraints, variables }) as { feasible?: boolean };
  return result.feasible === true;
}

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
