// Method: the latency of each output under retiming for folding (docs/analysis.md, "Latency of
// each output"). All outputs share one retiming value r(outputs) (docs/format.md); each output's
// own need is the least r(o) its in-edges allow with the operations' retiming as chosen:
// r(o) >= r(U) - floor(D_F(e) / N) for a slotted output (its folded delay stays >= 0) and
// r(o) >= r(U) - w(e) for a tap (its delay count stays >= 0), the arcs of constraints.ts.
import type { OutputLatency, OutputLatencyReport } from '../types';
import { floorDiv } from './constraints';
import { NO_SLOT, OPERATION, OUTPUT, INPUT, type IndexedGraph } from './graph';

/**
 * Each output's latency (the lag of its samples in iterations, as the datapath has it), what it
 * needs alone, which output forces the shared value and by how much, and the options that lower it.
 * `r`: retiming per node (null: none applied, all 0). Null when the design has no fed output.
 */
export function outputLatency(g: IndexedGraph, folded: Float64Array, r: Float64Array | null, latency: 'free' | 'fixed'): OutputLatencyReport | null {
  const N = g.factor;
  const rOf = (i: number) => (r ? r[i] : 0);
  // The edge into each output that needs the most (file order breaks ties).
  const worst = new Map<number, { e: number; need: number; first: number }>();
  for (let e = 0; e < g.edgeCount; e++) {
    const o = g.edgeTo[e];
    if (g.role[o] !== OUTPUT) continue;
    const u = g.edgeFrom[e];
    const need = g.slot[o] === NO_SLOT ? rOf(u) - g.edgeDelays[e] : rOf(u) - floorDiv(folded[e], N);
    const w = worst.get(o);
    if (!w) worst.set(o, { e, need, first: e });
    else if (need > w.need) worst.set(o, { ...w, e, need });
  }
  if (worst.size === 0) return null;
  let shared = 0;
  for (const o of worst.keys()) shared = rOf(o);
  const outputs: OutputLatency[] = [];
  for (const [o, w] of [...worst].sort((a, b) => a[0] - b[0])) {
    const u = g.edgeFrom[w.first];
    const tap = g.slot[o] === NO_SLOT;
    // A tap loads when its producer delivers (partition 0 for a held input); a slot in its partition.
    const producerCycle = g.role[u] === OPERATION ? g.slot[u] + g.stages[u] : g.role[u] === INPUT && g.slot[u] !== NO_SLOT ? g.slot[u] : 0;
    outputs.push({
      node: g.nodeIds[o],
      mode: tap ? 'tap' : 'slot',
      cycle: tap ? producerCycle : g.slot[o],
      latency: tap ? rOf(u) - g.edgeDelays[w.first] + 0 : shared + 0,
      needs: w.need + 0,
    });
  }
  const report: OutputLatencyReport = { shared: shared + 0, outputs, forcedBy: null };
  if (latency === 'fixed' || shared <= 0) return report;
  const top = Math.max(...outputs.map((x) => x.needs));
  const forcing = outputs.filter((x) => x.needs === top);
  if (top !== shared || forcing.length !== 1) return report;
  const f = forcing[0];
  const others = outputs.filter((x) => x !== f).map((x) => x.needs);
  const floor = others.length ? Math.max(0, ...others) : 0;
  const by = shared - floor;
  if (by <= 0) return report;
  const oi = g.nodeIndex.get(f.node)!;
  const e = worst.get(oi)!.e;
  const u = g.edgeFrom[e];
  const options: string[] = [];
  if (f.mode === 'slot') {
    const tapNeed = rOf(u) - g.edgeDelays[e];
    if (tapNeed < f.needs) options.push(`take ${f.node} as a tap (no slot): it would need ${Math.max(tapNeed, floor)}`);
    // A later slot reads the value later in the iteration: the folded delay grows by one per partition.
    const s = g.slot[oi];
    let best: { slot: number; need: number } | null = null;
    for (let t = 0; t < N; t++) {
      const need = rOf(u) - floorDiv(folded[e] + t - s, N);
      if (need < f.needs && (!best || need < best.need)) best = { slot: t, need };
      if (best && best.need <= floor) break;
    }
    if (best) options.push(`read ${f.node} in slot ${best.slot}: it would need ${Math.max(best.need, floor)}`);
  }
  // Below its producer's own retiming no choice at the output helps: the producer must move less.
  if (rOf(u) > 0) options.push(`give ${g.nodeIds[u]} (retimed by +${rOf(u)}) a partition that needs less retiming: ${f.node} is lowered with it`);
  report.forcedBy = { node: f.node, by, options };
  return report;
}
