// The best folding by exhaustive enumeration: every assignment of the operations to (unit, partition),
// scored by the engine's analyze, independent of the planner's search.
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';

const isOp = (kind: string) => kind !== 'input' && kind !== 'output';

/**
 * Every assignment of the operations to (unit of their kind, partition), no cell used twice,
 * scored by analyze: the fewest registers (lifetime-analysis minimum) over the feasible ones,
 * Infinity when none is feasible. null when there are more than `limit` assignments.
 */
export function exhaustiveMinimum(d: Design, limit: number, pins: Record<string, (string | null)[]> = {}): { registers: number; count: number } | null {
  const N = d.folding.factor;
  const ops = d.nodes.filter((n) => isOp(n.kind));
  const pinOf = new Map<string, readonly [string, number]>();
  for (const [u, list] of Object.entries(pins)) list.forEach((id, t) => id !== null && pinOf.set(id, [u, t] as const));
  const cells = ops.map((op) =>
    pinOf.has(op.id) ? [pinOf.get(op.id)!] : d.units.filter((u) => u.kind === op.kind).flatMap((u) => Array.from({ length: N }, (_, t) => [u.id, t] as const)),
  );
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
