// Method: folded delay D_F(U->V) = N*w - P_U + v - u of the folding transformation (Parhi 1999, ch. 6).
// Convention: a held input takes its consumer's slot; an edge into an output without slot is a tap (NaN).
import { INPUT, NO_SLOT, type IndexedGraph } from './graph';

/** Folded delay of edge e carrying `delays` delays (NaN for a tap). */
export function foldedDelayOf(g: IndexedGraph, e: number, delays: number = g.edgeDelays[e]): number {
  const u = g.edgeFrom[e];
  const v = g.edgeTo[e];
  const slotV = g.slot[v];
  // The consumer has no partition: an output taken when produced (or, outside the format's
  // intent, an edge into a held input). No folded datapath register is involved.
  if (slotV === NO_SLOT) return NaN;
  let slotU = g.slot[u];
  if (slotU === NO_SLOT) {
    if (g.role[u] !== INPUT) return NaN; // an output without slot feeding something: a tap too
    slotU = slotV; // held input: valid all iteration long, read at the consumer's partition
  }
  return g.factor * delays - g.stages[u] + slotV - slotU;
}

/** Folded delays of all edges in file order (NaN for taps); `delays` defaults to the design's. */
export function foldedDelays(g: IndexedGraph, delays: Float64Array = g.edgeDelays): Float64Array {
  const out = new Float64Array(g.edgeCount);
  for (let e = 0; e < g.edgeCount; e++) out[e] = foldedDelayOf(g, e, delays[e]);
  return out;
}

/** NaN (tap) becomes null for the report. */
export function asNullable(x: number): number | null {
  return Number.isNaN(x) ? null : x;
}

/** True when some edge has a negative folded delay: retiming is needed. */
export function hasNegative(folded: Float64Array): boolean {
  for (let e = 0; e < folded.length; e++) if (folded[e] < 0) return true;
  return false;
}
