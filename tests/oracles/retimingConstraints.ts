// The retiming constraints of docs/analysis.md written out from the design alone, without the
// engine, so tests can hold the engine and outside solvers against them.
import type { Design } from '../../shared/types';

/**
 * One row per edge: one variable per operation, one
 * shared by all inputs, one by all outputs (the same one with fixed latency).
 */
export interface ConstraintRow {
  from: string;
  to: string;
  /** floor(D_F / N), or w for a tap. */
  bound: number;
  /** Has a folded delay (not a tap): counts in the objective. */
  folded: boolean;
}

/** The constraints of docs/analysis.md from the design alone, with each edge's retiming variable. */
export function constraintsOf(design: Design): { rows: ConstraintRow[]; variable: (id: string) => string } {
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
  const rows = design.edges.map((e) => {
    const from = byId.get(e.from)!;
    const to = byId.get(e.to)!;
    const slotTo = to.kind === 'output' || to.kind === 'input' ? to.slot : position.get(to.id)!.slot;
    if (slotTo === undefined) return { from: e.from, to: e.to, bound: e.delays, folded: false };
    const held = from.kind === 'input' && from.slot === undefined;
    const slotFrom = held ? slotTo : from.kind === 'input' ? from.slot! : position.get(from.id)!.slot;
    const stages = from.kind === 'input' ? 0 : position.get(from.id)!.stages;
    return { from: e.from, to: e.to, bound: Math.floor((N * e.delays - stages + slotTo - slotFrom) / N), folded: true };
  });
  return { rows, variable };
}
