// Retiming by a general-purpose LP solver (javascript-lp-solver, npm) on the constraints restated
// in retimingConstraints.ts: feasibility, and the optimum of the fewest-register objectives. A
// system of difference constraints with integer bounds is totally unimodular, so the LP relaxation
// decides the integer problem exactly.
import solver from 'javascript-lp-solver';
import type { Design } from '../../shared/types';
import { constraintsOf, type ConstraintRow } from './retimingConstraints';

/**
 * Feasibility by the LP solver of the constraints restated in helpers.ts (constraintsOf):
 * one variable per operation, one shared by all inputs, one by all outputs;
 * r(U) - r(V) <= floor(D_F / N), or <= w for a tap into an output without slot.
 */
export function lpFeasible(design: Design): boolean {
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

/**
 * Optimum by javascript-lp-solver of the LP of docs/engine.md, subject to r(U) - r(V) <= bound:
 * 'edges' minimises the sum over folded edges of r(V) - r(U); 'fanout' gives each node with two
 * or more folded out-edges (held inputs excepted) a variable M >= r(V) + bound per out-edge and
 * counts M - r(U) instead. Its variables are nonnegative by default; the objective and the
 * constraints do not change when every variable moves by the same amount, so nothing is lost.
 */
export function lpOptimum(design: Design, objective: 'edges' | 'fanout', maxLatency?: number): number | null {
  const { rows, variable } = constraintsOf(design);
  const constraints: Record<string, { max: number }> = {};
  const variables: Record<string, Record<string, number>> = {};
  const add = (v: string, c: string, x: number) => {
    variables[v] ??= {};
    variables[v][c] = (variables[v][c] ?? 0) + x;
  };
  let k = 0;
  const byId = new Map(design.nodes.map((n) => [n.id, n]));
  const foldedOut = new Map<string, ConstraintRow[]>();
  for (const row of rows) if (row.folded) foldedOut.set(row.from, [...(foldedOut.get(row.from) ?? []), row]);
  const mirrored = (id: string) => {
    const node = byId.get(id)!;
    const held = node.kind === 'input' && node.slot === undefined;
    return objective === 'fanout' && !held && foldedOut.get(id)!.length >= 2;
  };
  for (const [id, out] of foldedOut) {
    if (!mirrored(id)) continue;
    const M = `m_${id}`;
    add(M, 'cost', 1);
    add(variable(id), 'cost', -1);
    for (const row of out) {
      const name = `c${k++}`;
      constraints[name] = { max: -row.bound };
      add(variable(row.to), name, 1);
      add(M, name, -1);
    }
  }
  for (const row of rows) {
    const [u, v] = [variable(row.from), variable(row.to)];
    if (u === v) {
      if (row.bound < 0) return null; // reads 0 <= bound; decided here, see retiming-lp.test.ts
      continue;
    }
    const name = `c${k++}`;
    constraints[name] = { max: row.bound };
    add(u, name, 1);
    add(v, name, -1);
    if (row.folded && !mirrored(row.from)) {
      add(v, 'cost', 1);
      add(u, 'cost', -1);
    }
  }
  if (maxLatency !== undefined) {
    constraints.latency = { max: maxLatency };
    add('r_outputs', 'latency', 1);
    add('r_inputs', 'latency', -1);
  }
  // The solver mishandles explicit 0 coefficients (see retiming-lp.test.ts): drop them.
  for (const v of Object.values(variables)) for (const key of Object.keys(v)) if (v[key] === 0) delete v[key];
  const result = solver.Solve({ optimize: 'cost', opType: 'min', constraints, variables }) as {
    feasible?: boolean;
    bounded?: boolean;
    result: number;
  };
  if (!result.feasible) return null;
  return result.result;
}
