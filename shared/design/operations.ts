// The arithmetic of an operation node (docs/format.md, "op"): its `op` when given, else its kind
// when the kind names an operation, and `gain` for a one-input `mul` with a coefficient. The one
// resolver of validation, the reference evaluation, the control tables and the RTL.
import type { NodeOp } from '../types';

/** Every operation a node can compute, in the order the format lists them. */
export const NODE_OPS: readonly NodeOp[] = ['add', 'sub', 'mul', 'gain', 'neg', 'pass'];

/** Operations that take exactly one operand. */
export const UNARY_OPS: ReadonlySet<NodeOp> = new Set(['gain', 'neg', 'pass']);

/**
 * The operation of a node with `arity` operand edges, or null when neither its op nor its kind
 * names one. Takes raw file data too (validation calls it before the design is typed), so it
 * only trusts what it checks.
 */
export function nodeOp(n: { kind?: unknown; op?: unknown; coefficient?: unknown }, arity: number): NodeOp | null {
  if (typeof n.op === 'string') return n.op as NodeOp;
  const k = n.kind;
  if (k === 'mul' && arity === 1 && typeof n.coefficient === 'number') return 'gain';
  return (NODE_OPS as readonly unknown[]).includes(k) ? (k as NodeOp) : null;
}
