// The fully parallel graph that `pleat rtl --area` compares the folded datapath with.
import type { Design } from '../../types';

/**
 * The same graph without sharing: one 0-stage unit per operation, N = 1, boundary slots dropped.
 * Its RTL is what "does sharing pay?" compares the folded RTL with.
 */
export function parallelDesign(design: Design): Design {
  const taken = new Set([...design.nodes.map((n) => n.id), ...design.units.map((u) => u.id)]);
  const units: Design['units'] = [];
  const sets: Design['folding']['sets'] = {};
  for (const n of design.nodes) {
    if (n.kind === 'input' || n.kind === 'output') continue;
    let id = `P_${n.id}`;
    for (let i = 2; taken.has(id); i++) id = `P_${n.id}_${i}`;
    taken.add(id);
    units.push({ id, kind: n.kind, stages: 0 });
    sets[id] = [n.id];
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
    folding: { factor: 1, sets, latency: 'free' },
  };
}
