// The fully parallel graph that `pleat rtl --area` compares the folded datapath with.
import { analyzeDatapath } from '../../analysis/analyze';
import { controlTables } from '../control';
import type { ControlTables, Design } from '../../types';

export interface ParallelOptions {
  /**
   * `folded` (default): each operation keeps the pipeline stages of the unit that runs it in the
   * folded plan, so both sides have the same registers per operation and timing compares like
   * with like. `none`: every unit combinational (0 stages), the reference of earlier versions.
   */
  stages?: 'folded' | 'none';
  /** Folding factor of the reference (default 1): one unit per operation either way. */
  factor?: number;
  /** Slot of each operation in its own unit (default 0); with N > 1 it decides which loops fit. */
  slots?: Map<string, number>;
}

/**
 * The same graph without sharing: one unit per operation, boundary slots dropped, every node in
 * slot 0 of its own unit. Its RTL is what "does sharing pay?" compares the folded RTL with.
 */
export function parallelDesign(design: Design, opts: ParallelOptions = {}): Design {
  const stagesOf = new Map<string, number>();
  if ((opts.stages ?? 'folded') === 'folded') {
    const unitStages = new Map(design.units.map((u) => [u.id, u.stages]));
    for (const [unit, nodes] of Object.entries(design.folding.sets)) {
      for (const n of nodes) if (n !== null) stagesOf.set(n, unitStages.get(unit) ?? 0);
    }
  }
  const taken = new Set([...design.nodes.map((n) => n.id), ...design.units.map((u) => u.id)]);
  const units: Design['units'] = [];
  const sets: Design['folding']['sets'] = {};
  for (const n of design.nodes) {
    if (n.kind === 'input' || n.kind === 'output') continue;
    let id = `P_${n.id}`;
    for (let i = 2; taken.has(id); i++) id = `P_${n.id}_${i}`;
    taken.add(id);
    units.push({ id, kind: n.kind, stages: stagesOf.get(n.id) ?? 0 });
    const N = opts.factor ?? 1;
    const set: (string | null)[] = Array.from({ length: N }, () => null);
    set[(opts.slots?.get(n.id) ?? 0) % N] = n.id;
    sets[id] = set;
  }
  const nodes = design.nodes.map((n) => {
    if (n.kind !== 'input' && n.kind !== 'output') return n;
    const { slot: _slot, ...rest } = n;
    return rest;
  });
  return {
    ...design,
    name: `${design.name}-parallel`,
    units,
    nodes,
    folding: { factor: opts.factor ?? 1, sets, latency: 'free' },
  };
}

export interface ParallelReference {
  design: Design;
  control: ControlTables;
  /** The factor the reference runs at: 1, or more when a loop has fewer delays than pipeline stages. */
  factor: number;
  /** Why the factor is above 1, when it is. */
  note: string | null;
}

/**
 * Slots for a one-unit-per-operation datapath at factor N, or null when no retiming can make it
 * work. Retiming for folding asks, per edge U -> V with w delays, N(w + r(V) - r(U)) - P_U + v - u
 * >= 0; with t(X) = N r(X) + x (x the slot) that is t(V) - t(U) >= P_U - N w, difference
 * constraints that hold exactly when no loop has more stages than N times its delays (Parhi,
 * ch. 6: the folding inequality). Longest paths (Bellman-Ford) give t, and x = t mod N.
 */
export function parallelSlots(design: Design, N: number, stages: Map<string, number>): Map<string, number> | null {
  const ops = design.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output').map((n) => n.id);
  const index = new Map(ops.map((id, i) => [id, i]));
  const arcs: [number, number, number][] = [];
  for (const e of design.edges) {
    const u = index.get(e.from);
    const v = index.get(e.to);
    if (u === undefined || v === undefined) continue; // boundary edges: held inputs and taps fit any slot
    arcs.push([u, v, (stages.get(e.from) ?? 0) - N * e.delays]);
  }
  const t = new Array<number>(ops.length).fill(0);
  for (let round = 0; round <= ops.length; round++) {
    let changed = false;
    for (const [u, v, w] of arcs) {
      if (t[u]! + w > t[v]!) {
        t[v] = t[u]! + w;
        changed = true;
      }
    }
    if (!changed) return new Map(ops.map((id, i) => [id, ((t[i]! % N) + N) % N]));
  }
  return null; // still relaxing after |V| rounds: a loop needs a larger N
}

/**
 * The pipelined parallel reference at the smallest factor its loops allow. With the folded
 * stages a loop of D delays and S stages needs N >= S / D (the loop bound of retiming for
 * folding), so a tight feedback loop cannot take one sample per cycle even without sharing; the
 * search starts at 1 and stops at `maxFactor` (the folded plan's N, which is always enough: the
 * folded plan passes the same loop bound). Null when none up to it has a datapath.
 */
export function parallelReference(design: Design, opts: { stages?: ParallelOptions['stages']; maxFactor?: number } = {}): ParallelReference | null {
  const max = Math.max(1, opts.maxFactor ?? design.folding.factor);
  // Stages per operation, read back from the reference itself (one node per unit).
  const stages = new Map<string, number>();
  const par1 = parallelDesign(design, { stages: opts.stages });
  for (const u of par1.units) stages.set(par1.folding.sets[u.id]![0]!, u.stages);
  for (let N = 1; N <= max; N++) {
    const slots = parallelSlots(design, N, stages);
    if (!slots) continue;
    const par = parallelDesign(design, { stages: opts.stages, factor: N, slots });
    const { analysis, datapath } = analyzeDatapath(par);
    if (!analysis.retiming.feasible) continue;
    const control = controlTables(par, analysis, datapath).control;
    if (!control) continue;
    const note = N > 1 ? `a loop has fewer delays than pipeline stages, so the unshared datapath takes a sample every ${N} cycles at best` : null;
    return { design: par, control, factor: N, note };
  }
  return null;
}
