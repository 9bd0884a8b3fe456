// Method: per-edge and delay-line register counts, and lifetime analysis (Parhi 1999, ch. 6).
// Convention: not live in the production cycle, live in the last-use cycle, periodic steady state.
import type { Lifetime, LifetimeChart, Registers } from '../types';
import { INPUT, NO_SLOT, OUTPUT, type IndexedGraph } from './graph';

/**
 * The variables of lifetime analysis, from the folded delays the datapath uses (all >= 0 or
 * NaN for taps), in the order both lifetimeVariables and registerFigures use. A node is a
 * variable when its largest folded delay is positive (`edge` -1); a held input gives one variable
 * per out-edge with delays (`edge` that edge).
 */
function eachLifetime(
  g: IndexedGraph, folded: Float64Array, delays: Float64Array, visit: (node: number, edge: number, tIn: number, tOut: number) => void,
): void {
  for (let u = 0; u < g.nodeCount; u++) {
    const start = g.outStart[u];
    const end = g.outStart[u + 1];
    if (start === end) continue;
    if (g.role[u] === INPUT && g.slot[u] === NO_SLOT) {
      for (let k = start; k < end; k++) {
        const e = g.outEdge[k];
        const d = folded[e];
        if (Number.isNaN(d) || !(delays[e] > 0)) continue;
        const tIn = g.slot[g.edgeTo[e]];
        visit(u, e, tIn, tIn + d);
      }
      continue;
    }
    let longest = 0;
    for (let k = start; k < end; k++) {
      const d = folded[g.outEdge[k]];
      if (d > longest) longest = d;
    }
    if (longest > 0 && g.slot[u] !== NO_SLOT) {
      const tIn = g.slot[u] + g.stages[u];
      visit(u, -1, tIn, tIn + longest);
    }
  }
}

/** The variables of lifetime analysis (eachLifetime); a held input's are named `input->consumer`. */
export function lifetimeVariables(g: IndexedGraph, folded: Float64Array, delays: Float64Array): Lifetime[] {
  const out: Lifetime[] = [];
  const seen = new Map<string, number>();
  eachLifetime(g, folded, delays, (u, e, tIn, tOut) => {
    const id = g.nodeIds[u];
    if (e < 0) {
      out.push({ variable: id, node: id, tIn, tOut });
      return;
    }
    let name = `${id}->${g.nodeIds[g.edgeTo[e]]}`;
    const again = (seen.get(name) ?? 0) + 1;
    seen.set(name, again);
    if (again > 1) name += `#${again}`; // a second edge to the same consumer
    out.push({ variable: name, node: id, tIn, tOut });
  });
  return out;
}

/**
 * live[t] = sum over variables of #{ l : tIn + lN < t <= tOut + lN }, 0 <= t < N. Each
 * variable covers floor(L/N) whole turns of the N partitions plus a run of L mod N partitions
 * starting after tIn; a circular difference array adds each in O(1), O(variables + N) in all.
 */
export function liveCounts(factor: number, variables: readonly Lifetime[]): number[] {
  const N = factor;
  const diff = new Float64Array(N + 1);
  let whole = 0;
  for (const x of variables) whole += addLifetime(diff, N, x.tIn, x.tOut);
  const live = new Array<number>(N);
  let running = whole;
  for (let t = 0; t < N; t++) {
    running += diff[t];
    live[t] = running;
  }
  return live;
}

/** Adds one lifetime's partial turn to the circular difference array; returns its whole turns. */
function addLifetime(diff: Float64Array, N: number, tIn: number, tOut: number): number {
  const length = tOut - tIn;
  if (length <= 0) return 0;
  const whole = Math.floor(length / N);
  const rest = length % N;
  if (rest === 0) return whole;
  const first = (tIn + 1) % N;
  const last = first + rest; // exclusive, may run past N
  if (last <= N) {
    diff[first]++;
    diff[last]--;
  } else {
    diff[first]++;
    diff[N]--;
    diff[0]++;
    diff[last - N]--;
  }
  return whole;
}

/**
 * Per-edge registers and the lifetime minimum, as registerCounts counts them, without the chart:
 * the fewest-register search scores each candidate retiming with it, and only the kept one gets
 * its chart (no variable objects, names or live array per candidate).
 */
export function registerFigures(g: IndexedGraph, folded: Float64Array, delays: Float64Array): { perEdge: number; minimum: number } {
  const N = g.factor;
  let perEdge = 0;
  for (let e = 0; e < g.edgeCount; e++) {
    const d = folded[e];
    if (!Number.isNaN(d)) perEdge += d;
  }
  // The variables of lifetimeVariables, added as they are found.
  const diff = new Float64Array(N + 1);
  let whole = 0;
  eachLifetime(g, folded, delays, (_u, _e, tIn, tOut) => {
    whole += addLifetime(diff, N, tIn, tOut);
  });
  let running = whole;
  let minimum = 0;
  for (let t = 0; t < N; t++) {
    running += diff[t];
    if (running > minimum) minimum = running;
  }
  return { perEdge, minimum };
}

/** perEdge, delayLines and the lifetime minimum, with the chart they come from. */
export function registerCounts(
  g: IndexedGraph,
  folded: Float64Array,
  delays: Float64Array,
): { registers: Registers; lifetimes: LifetimeChart } {
  let perEdge = 0;
  // Longest folded delay leaving each unit (all its nodes share one tapped chain) and each input.
  const unitLongest = new Float64Array(g.unitIds.length);
  const nodeLongest = new Float64Array(g.nodeCount);
  for (let e = 0; e < g.edgeCount; e++) {
    const d = folded[e];
    if (Number.isNaN(d)) continue;
    perEdge += d;
    const u = g.edgeFrom[e];
    const unit = g.unitOf[u];
    if (unit >= 0) {
      if (d > unitLongest[unit]) unitLongest[unit] = d;
    } else if (d > nodeLongest[u]) nodeLongest[u] = d;
  }
  let delayLines = 0;
  for (let k = 0; k < unitLongest.length; k++) delayLines += unitLongest[k];
  for (let u = 0; u < g.nodeCount; u++) if (g.role[u] !== OUTPUT) delayLines += nodeLongest[u];

  const variables = lifetimeVariables(g, folded, delays);
  const live = liveCounts(g.factor, variables);
  let minimum = 0;
  for (const x of live) if (x > minimum) minimum = x;
  return {
    registers: { perEdge, delayLines, minimum },
    lifetimes: { factor: g.factor, variables, live },
  };
}
