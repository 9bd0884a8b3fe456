// Retiming feasibility against a general-purpose LP solver (javascript-lp-solver, npm): a system
// of difference constraints with integer bounds has an integer solution exactly when its LP
// relaxation is feasible (its matrix is totally unimodular), so the two must always agree.
import { describe, expect, it } from 'vitest';
import solver from 'javascript-lp-solver';
import { analyze } from '../../shared/analyze';
import type { Design } from '../../shared/types';
import { randomDesign } from './helpers';

/**
 * The constraints of analysis.md, written out here without the engine: one variable per
 * operation, one shared by all inputs, one by all outputs (the same one with fixed latency);
 * r(U) - r(V) <= floor(D_F / N), or <= w for a tap into an output without slot.
 */
function lpFeasible(design: Design): boolean {
  const N = design.folding.factor;
  const byId = new Map(design.nodes.map((n) => [n.id, n]));
  const position = new Map<string, { slot: number; stages: number }>();
  for (const unit of design.units) {
    (design.folding.sets[unit.id] ?? []).forEach((id, p) => {
      if (id !== null) position.set(id, { slot: p, stages: unit.stages });
    });
  }
  const variable = (id: string) => {
    const kind = byId.get(id)!.kind;
    if (kind === 'input') return 'r_inputs';
    if (kind === 'output') return design.folding.latency === 'fixed' ? 'r_inputs' : 'r_outputs';
    return `r_${id}`;
  };
  const constraints: Record<string, { max: number }> = {};
  let selfConflict = false;
  const variables: Record<string, Record<string, number>> = {};
  const coefficient = (v: string, c: string, x: number) => {
    variables[v] ??= { cost: 1 };
    variables[v][c] = (variables[v][c] ?? 0) + x;
  };
  design.edges.forEach((e, k) => {
    const from = byId.get(e.from)!;
    const to = byId.get(e.to)!;
    const slotTo = to.kind === 'output' || to.kind === 'input' ? to.slot : position.get(to.id)!.slot;
    let bound: number;
    if (slotTo === undefined) bound = e.delays; // tap
    else {
      const held = from.kind === 'input' && from.slot === undefined;
      const slotFrom = held ? slotTo : from.kind === 'input' ? from.slot! : position.get(from.id)!.slot;
      const stages = from.kind === 'input' ? 0 : position.get(from.id)!.stages;
      bound = Math.floor((N * e.delays - stages + slotTo - slotFrom) / N);
    }
    if (variable(e.from) === variable(e.to)) {
      // A constraint on one variable with itself reads 0 <= bound; the solver mishandles rows
      // whose only coefficient is an explicit 0, so it is decided here.
      if (bound < 0) selfConflict = true;
      return;
    }
    const name = `c${k}`;
    constraints[name] = { max: bound };
    coefficient(variable(e.from), name, 1);
    coefficient(variable(e.to), name, -1);
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
