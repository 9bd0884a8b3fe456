// Method: the difference constraints of retiming for folding (Leiserson and Saxe's formulation, as folding uses it): one variable per operation, shared ones for the boundary.
// Convention: arc e = U -> V of the DFG becomes var(V) -> var(U) with weight floor(D_F / N), or w(e) for a tap; see docs/analysis.md.
import { INPUT, OPERATION, OUTPUT, type IndexedGraph } from './graph';

export type Latency = 'free' | 'fixed';

/** Which retiming variable each node uses: one per operation, shared ones for the boundary. */
export interface RetimingVariables {
  varOf: Int32Array;
  count: number;
  /** Shared variable of all inputs and of all outputs (equal when latency is fixed). */
  inputVar: number;
  outputVar: number;
  hasInputs: boolean;
  hasOutputs: boolean;
}

export function retimingVariables(g: IndexedGraph, latency: Latency): RetimingVariables {
  const varOf = new Int32Array(g.nodeCount);
  let count = 0;
  for (let i = 0; i < g.nodeCount; i++) if (g.role[i] === OPERATION) varOf[i] = count++;
  const inputVar = count++;
  const outputVar = latency === 'fixed' ? inputVar : count++;
  let hasInputs = false;
  let hasOutputs = false;
  for (let i = 0; i < g.nodeCount; i++) {
    if (g.role[i] === INPUT) {
      varOf[i] = inputVar;
      hasInputs = true;
    } else if (g.role[i] === OUTPUT) {
      varOf[i] = outputVar;
      hasOutputs = true;
    }
  }
  return { varOf, count, inputVar, outputVar, hasInputs, hasOutputs };
}

/** floor(a / n) for integers, exact for negative a too. */
export function floorDiv(a: number, n: number): number {
  const r = ((a % n) + n) % n;
  return (a - r) / n;
}

/**
 * The constraint graph: for DFG edge e = U -> V, arc e goes from var(V) to var(U) with weight
 * floor(D_F/N), or w(e) for a tap (which only has to keep its delay nonnegative).
 */
export interface ConstraintGraph {
  vars: RetimingVariables;
  arcFrom: Int32Array;
  arcTo: Int32Array;
  weight: Float64Array;
}

export function retimingConstraints(g: IndexedGraph, folded: Float64Array, latency: Latency): ConstraintGraph {
  const vars = retimingVariables(g, latency);
  const m = g.edgeCount;
  const arcFrom = new Int32Array(m);
  const arcTo = new Int32Array(m);
  const weight = new Float64Array(m);
  for (let e = 0; e < m; e++) {
    arcFrom[e] = vars.varOf[g.edgeTo[e]];
    arcTo[e] = vars.varOf[g.edgeFrom[e]];
    const d = folded[e];
    weight[e] = Number.isNaN(d) ? g.edgeDelays[e] : floorDiv(d, g.factor);
  }
  return { vars, arcFrom, arcTo, weight };
}

/** r(U) - r(V) <= bound for every constraint arc, checked directly. */
export function satisfiesConstraints(cg: ConstraintGraph, values: ArrayLike<number>): boolean {
  for (let e = 0; e < cg.arcFrom.length; e++) {
    const x = values[cg.arcTo[e]] - values[cg.arcFrom[e]];
    if (!Number.isInteger(x) || x > cg.weight[e]) return false;
  }
  return true;
}
