// Method: fewest-register retiming as the LP dual of a min-cost flow, with fan-out mirror nodes (Leiserson & Saxe 1991); primal-dual (Ahuja, Magnanti & Orlin 1993, ch. 9: a maximum flow on the arcs of reduced cost 0, then Dijkstra on reduced costs with Dial's bucket queue, 1969).
// Convention: objective = sum of retimed folded delays (or per-node maxima to within N-1); integer arithmetic; exact, or null past a work budget.
import type { ConstraintGraph } from './constraints';
import { INPUT, NO_SLOT, type IndexedGraph } from './graph';

/** Largest design (edges) on which the engine searches for the fewest-register retiming: every design the loader takes. */
export const MAX_MIN_REGISTER_EDGES = 1_000_000;
/** Largest design (edges) on which the fan-out objective is tried too. */
export const MAX_FANOUT_EDGES = 1_000_000;
/**
 * Arc scans and queue steps one search may spend before it gives up: a fixed part plus a
 * multiple of the arcs, far above what the primal-dual needs on the designs measured (a few
 * tens of scans per arc), so that only a pathological design stops it.
 */
export function minRegisterWorkBudget(arcs: number): number {
  return 50_000_000 + 2_000 * arcs;
}

export type RegisterObjective = 'edges' | 'fanout';

export interface MinRegisterOptions {
  /** Extra constraint r(outputs) - r(inputs) <= maxLatency (only when they are two variables). */
  maxLatency?: number;
  /**
   * 'edges' (default): the sum of the retimed folded delays, one register chain per edge.
   * 'fanout': for each node the largest retimed folded delay leaving it, to within N - 1
   * (Leiserson & Saxe's mirror node per multi-fanout node), per edge for held inputs.
   */
  objective?: RegisterObjective;
  /** Work budget (arc scans + queue steps); default minRegisterWorkBudget of the arcs. */
  budget?: number;
  /** Arrays shared with the other searches on the same design (SearchArrays); default: its own. */
  arrays?: SearchArrays;
}

type TypedArrayOf<T> = { new (buffer: ArrayBuffer, offset: number, length: number): T; readonly BYTES_PER_ELEMENT: number };

/**
 * Typed arrays that the searches on one design share, one buffer per role, so the 2-4 searches of
 * a retiming choice allocate them once: on a design of 100,000 edges each search's arrays are
 * about 20 MB, and memory freed between searches was mostly kept by the allocator, not returned
 * (docs/performance.md, "Peak memory"). `vars` and `arcs` bound what the searches ask for, so a
 * later, larger search does not allocate again; pages never written are never resident. Each
 * array comes back filled with `fill`, as a new one would be (0 unless told).
 */
export class SearchArrays {
  private readonly buffers = new Map<string, ArrayBuffer>();
  constructor(
    readonly vars = 0,
    readonly arcs = 0,
  ) {}
  take<T extends Int32Array | Float64Array>(role: string, type: TypedArrayOf<T>, length: number, capacity: number, fill = 0): T {
    const bytes = length * type.BYTES_PER_ELEMENT;
    let buffer = this.buffers.get(role);
    if (!buffer || buffer.byteLength < bytes) {
      buffer = new ArrayBuffer(Math.max(bytes, capacity * type.BYTES_PER_ELEMENT));
      this.buffers.set(role, buffer);
      const fresh = new type(buffer, 0, length);
      if (fill !== 0) fresh.fill(fill);
      return fresh;
    }
    const a = new type(buffer, 0, length);
    a.fill(fill);
    return a;
  }
}

export interface MinRegisterSolution {
  /** Retiming of every constraint variable (not normalised). */
  values: Float64Array;
  /**
   * Variable part of the objective, in iterations: 'edges' sums r(V) - r(U) over edges with a
   * folded delay; 'fanout' sums m(u) - r(U) over mirrored nodes plus r(V) - r(U) over the
   * other edges it counts, with m(u) = max over u's out-edges of r(V) + floor(D_F / N).
   */
  objective: number;
  /** Work spent (arc scans + queue steps). */
  work: number;
}

/**
 * Minimises the register objective subject to r(U) - r(V) <= c(e) for every constraint arc.
 * `folded[e]` tells which DFG edges have a folded delay (NaN for taps, which only constrain).
 * 'edges' minimises sum_v r(v) * (indeg_F(v) - outdeg_F(v)); 'fanout' gives each node u with
 * two or more such out-edges a mirror variable m(u) >= r(V) + floor(D_F / N) per out-edge and
 * counts m(u) - r(U) once instead of each edge.
 *
 * LP dual: a min-cost flow along arcs tail -> head of cost c for every constraint
 * r(tail) - r(head) <= c, no upper bound, each variable emitting minus its objective
 * coefficient. `start` must satisfy every constraint (the shortest-path solution does): with it
 * as potential every reduced cost c - r(tail) + r(head) is >= 0, so Dijkstra applies from the
 * first search. Returns null when the work budget runs out or a deficit cannot be reached.
 */
export function minRegisterRetiming(
  g: IndexedGraph,
  cg: ConstraintGraph,
  folded: Float64Array,
  start: Float64Array,
  options: MinRegisterOptions = {},
): MinRegisterSolution | null {
  const objective = options.objective ?? 'edges';
  const n0 = cg.vars.count;
  const m0 = cg.arcFrom.length;
  const arrays = options.arrays ?? new SearchArrays();
  // Typed arrays sized for the most arcs and variables there can be (every DFG edge, the
  // latency arc, one mirror arc per folded edge; one mirror per node): no growing arrays, little
  // for the garbage collector on a design of a million edges.
  const maxArcs = 2 * m0 + 1;
  const tails = arrays.take('tails', Int32Array, maxArcs, maxArcs);
  const heads = arrays.take('heads', Int32Array, maxArcs, maxArcs);
  const costs = arrays.take('costs', Float64Array, maxArcs, maxArcs);
  let arcs = 0;
  const addArc = (t: number, h: number, c: number) => {
    tails[arcs] = t;
    heads[arcs] = h;
    costs[arcs] = c;
    arcs++;
  };
  // Objective coefficient of each variable (mirrors appended after the n0 retiming variables).
  const varsAtMost = n0 + g.nodeCount;
  const coef = arrays.take('coef', Float64Array, n0 + (objective === 'fanout' ? g.nodeCount : 0), varsAtMost);
  const init = arrays.take('init', Float64Array, coef.length, varsAtMost);
  init.set(start.subarray(0, n0));
  let vars = n0;
  // Constraint arcs in DFG direction: tail = var(U) = constraint arcTo, head = var(V) = arcFrom.
  for (let e = 0; e < m0; e++) {
    const u = cg.arcTo[e];
    const v = cg.arcFrom[e];
    if (u === v) continue; // reads 0 <= c(e): already checked by the shortest paths, no flow
    addArc(u, v, cg.weight[e]);
  }
  const { inputVar, outputVar } = cg.vars;
  if (options.maxLatency !== undefined && inputVar !== outputVar) {
    // r(out) - r(in) <= L reads like a DFG edge out -> in with bound L and no folded delay.
    addArc(outputVar, inputVar, options.maxLatency);
  }
  // Objective terms, with their mirror constraints for 'fanout'.
  const edgeTerm = (e: number) => {
    coef[cg.arcFrom[e]]++;
    coef[cg.arcTo[e]]--;
  };
  if (objective === 'edges') {
    for (let e = 0; e < m0; e++) if (!Number.isNaN(folded[e])) edgeTerm(e);
  } else {
    for (let u = 0; u < g.nodeCount; u++) {
      let count = 0;
      for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) if (!Number.isNaN(folded[g.outEdge[k]])) count++;
      const held = g.role[u] === INPUT && g.slot[u] === NO_SLOT;
      if (held || count < 2) {
        for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) if (!Number.isNaN(folded[g.outEdge[k]])) edgeTerm(g.outEdge[k]);
        continue;
      }
      const mirror = vars++;
      coef[mirror] = 1;
      coef[cg.vars.varOf[u]]--;
      let m = -Infinity;
      for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) {
        const e = g.outEdge[k];
        if (Number.isNaN(folded[e])) continue;
        // r(V) - m(u) <= -floor(D_F / N)
        const v = cg.arcFrom[e];
        addArc(v, mirror, -cg.weight[e]);
        m = Math.max(m, start[v] + cg.weight[e]);
      }
      init[mirror] = m;
    }
  }
  const sol = minCostPotentials(
    vars,
    tails.subarray(0, arcs),
    heads.subarray(0, arcs),
    costs.subarray(0, arcs),
    coef.subarray(0, vars),
    init.subarray(0, vars),
    options.budget ?? minRegisterWorkBudget(arcs),
    arrays,
  );
  if (!sol) return null;
  let value = 0;
  for (let v = 0; v < vars; v++) value += coef[v] * sol.values[v];
  return { values: sol.values.slice(0, n0), objective: value + 0, work: sol.work };
}

/**
 * min sum_v coef(v) p(v) subject to p(tail) - p(head) <= cost for every arc, from a feasible
 * `start`, by successive shortest paths on the dual min-cost flow (variable v emits -coef(v)
 * units; coefficients sum to 0). Integer data give integer potentials.
 */
export function minCostPotentials(
  n: number,
  tails: ArrayLike<number>,
  heads: ArrayLike<number>,
  costs: ArrayLike<number>,
  coef: ArrayLike<number>,
  start: Float64Array,
  budget: number = minRegisterWorkBudget(tails.length),
  arrays: SearchArrays = new SearchArrays(),
): { values: Float64Array; work: number } | null {
  const m = tails.length;
  const s = new FlowState(n, m, budget, arrays);
  const { excess, adjStart, adj, adjTo, adjCost, r } = s;
  for (let v = 0; v < n; v++) excess[v] = -coef[v];
  // Residual arcs: 2k forward (unbounded), 2k+1 backward (capacity = flow on k). Each is stored
  // in adjacency order with its other end and its signed cost beside it, so the searches read
  // memory in order instead of going through the arc's number.
  for (let k = 0; k < m; k++) {
    adjStart[tails[k] + 1]++;
    adjStart[heads[k] + 1]++;
  }
  for (let v = 0; v < n; v++) adjStart[v + 1] += adjStart[v];
  const fill = adjStart.slice(0, n);
  for (let k = 0; k < m; k++) {
    let i = fill[tails[k]]++;
    adj[i] = 2 * k;
    adjTo[i] = heads[k];
    adjCost[i] = costs[k];
    i = fill[heads[k]]++;
    adj[i] = 2 * k + 1;
    adjTo[i] = tails[k];
    adjCost[i] = -costs[k];
  }
  r.set(start.subarray(0, n));
  // The bucket queue of the searches orders by integer keys: the constraints' weights and the
  // shortest-path start are integers by construction (delays, stages, slots, floorDiv).
  for (let k = 0; k < m; k++) if (!Number.isInteger(costs[k])) throw new Error(`min-cost flow: arc cost ${costs[k]} is not an integer`);
  for (let v = 0; v < n; v++) if (!Number.isInteger(r[v])) throw new Error(`min-cost flow: start potential ${r[v]} is not an integer`);
  for (let k = 0; k < m; k++) if (costs[k] - r[tails[k]] + r[heads[k]] < 0) return null; // start infeasible
  let remaining = 0;
  for (let v = 0; v < n; v++) if (excess[v] > 0) remaining += excess[v];
  s.remaining = remaining;

  // Primal-dual: a maximum flow on the arcs of reduced cost 0 ships everything the shortest
  // paths can carry, then one Dijkstra raises the potentials to the distance of the nearest
  // deficit, and so on. Each round raises that distance, so there are as many rounds as
  // distinct distances (few: the costs are small integers), not one per unit of flow as with
  // single shortest paths. The start makes every reduced cost nonnegative, so the first round
  // starts with the flow (the Dijkstra before it would raise nothing: its distance is 0 when a
  // deficit is reachable over arcs of reduced cost 0, and the flow finds nothing otherwise).
  // Each step is its own small function: V8 optimises small functions soon and quickly, where
  // one large function ran unoptimised for most of a first (CLI) run.
  for (;;) {
    // Maximum flow from the excesses to the deficits over admissible arcs (Dinic's phases).
    for (;;) {
      const sources = levels(s);
      if (s.work > budget) return null;
      if (sources < 0) break;
      if (!blockingFlow(s, sources)) return null;
    }
    if (s.remaining <= 0) break;
    const target = nearestDeficit(s);
    if (target === OUT_OF_BUDGET) return null;
    if (target < 0) return null; // a deficit no excess reaches: the LP is unbounded
    raisePotentials(s, s.dist[target]);
  }
  return { values: r, work: s.work };
}

const OUT_OF_BUDGET = -2;

/** The arrays of one minCostPotentials run, allocated once. */
class FlowState {
  readonly excess: Float64Array;
  readonly adjStart: Int32Array;
  readonly adj: Int32Array;
  readonly adjTo: Int32Array;
  readonly adjCost: Float64Array;
  readonly flow: Float64Array;
  readonly r: Float64Array;
  readonly dist: Float64Array;
  /** Search number (levels and Dijkstra share the count) that last labelled v, and that settled it. */
  readonly seen: Int32Array;
  readonly done: Int32Array;
  search = 0;
  /** Variables the last levels search gave a distance in `dist` but no level, labelledCount of them. */
  readonly labelled: Int32Array;
  labelledCount = 0;
  /** Variables the last levels search reached: queue[0 .. reachedCount). */
  reachedCount = 0;
  readonly settled: Int32Array;
  settledCount = 0;
  readonly buckets: BucketQueue;
  // Max-flow on the arcs of reduced cost 0: BFS levels, current arcs, the path of the search.
  readonly level: Int32Array;
  readonly queue: Int32Array;
  readonly current: Int32Array;
  readonly pathNode: Int32Array;
  readonly pathArc: Int32Array;
  remaining = 0;
  work = 0;
  constructor(
    readonly n: number,
    m: number,
    readonly budget: number,
    arrays: SearchArrays,
  ) {
    const nn = Math.max(n, arrays.vars) + 1;
    const mm = Math.max(m, arrays.arcs);
    this.excess = arrays.take('excess', Float64Array, n, nn);
    this.adjStart = arrays.take('adjStart', Int32Array, n + 1, nn);
    this.adj = arrays.take('adj', Int32Array, 2 * m, 2 * mm);
    this.adjTo = arrays.take('adjTo', Int32Array, 2 * m, 2 * mm);
    this.adjCost = arrays.take('adjCost', Float64Array, 2 * m, 2 * mm);
    this.flow = arrays.take('flow', Float64Array, m, mm);
    // returned as the solution: its own array
    this.r = new Float64Array(n);
    this.dist = arrays.take('dist', Float64Array, n, nn);
    this.seen = arrays.take('seen', Int32Array, n, nn);
    this.done = arrays.take('done', Int32Array, n, nn);
    this.settled = arrays.take('settled', Int32Array, n, nn);
    this.labelled = arrays.take('labelled', Int32Array, n, nn);
    this.buckets = new BucketQueue(n, arrays, nn);
    this.level = arrays.take('level', Int32Array, n, nn);
    this.queue = arrays.take('queue', Int32Array, n, nn);
    this.current = arrays.take('current', Int32Array, n, nn);
    this.pathNode = arrays.take('pathNode', Int32Array, n + 1, nn);
    this.pathArc = arrays.take('pathArc', Int32Array, n + 1, nn);
  }
}

// A residual arc i leaving u is admissible when it has room (forward, or backward with flow)
// and reduced cost adjCost[i] - r[u] + r[adjTo[i]] of 0.

/**
 * Dijkstra on reduced costs from every excess until the first deficit is settled: that deficit,
 * -1 when none is reachable, OUT_OF_BUDGET. The variables settled before it are in `settled`.
 * It runs after a levels search that reached no deficit, with the same flow and potentials, so
 * it starts where that search ended: the variables it reached are those at distance 0 (settled,
 * their arcs already scanned), and those it labelled hold their tentative distances.
 */
function nearestDeficit(s: FlowState): number {
  const { excess, dist, seen, done, settled, labelled, queue, buckets: pq, adjStart, adj, adjTo, adjCost, flow, r, budget } = s;
  const search = s.search;
  pq.clear();
  let settledCount = 0;
  for (let k = 0; k < s.reachedCount; k++) {
    const v = queue[k];
    dist[v] = 0;
    seen[v] = search;
    done[v] = search;
    settled[settledCount++] = v;
  }
  for (let k = 0; k < s.labelledCount; k++) {
    const v = labelled[k];
    if (done[v] !== search) pq.push(v, dist[v]);
  }
  let work = s.work + settledCount + s.labelledCount;
  let target = -1;
  for (;;) {
    const u = pq.pop();
    if (u < 0) break;
    work++;
    done[u] = search;
    if (excess[u] < 0) {
      target = u;
      break;
    }
    settled[settledCount++] = u;
    const du = dist[u];
    const ru = r[u];
    const end = adjStart[u + 1];
    for (let i = adjStart[u]; i < end; i++) {
      const a = adj[i];
      if (a & 1 && flow[a >> 1] <= 0) continue;
      const v = adjTo[i];
      if (done[v] === search) continue;
      const dv = du + (adjCost[i] - ru + r[v]);
      if (seen[v] !== search) {
        dist[v] = dv;
        seen[v] = search;
        pq.push(v, dv);
      } else if (dv < dist[v]) {
        dist[v] = dv;
        pq.decrease(v, dv);
      }
    }
    work += end - adjStart[u];
    if (work > budget) {
      s.work = work;
      return OUT_OF_BUDGET;
    }
  }
  s.work = work;
  s.settledCount = settledCount;
  return target;
}

/** Raises the settled variables so that every arc of the shortest paths has reduced cost 0. */
function raisePotentials(s: FlowState, D: number): void {
  const { settled, settledCount, r, dist } = s;
  for (let i = 0; i < settledCount; i++) {
    const v = settled[i];
    r[v] += D - dist[v];
  }
  s.work += settledCount;
}

/**
 * BFS levels over admissible arcs from every excess; a deficit ends a path. Returns how many
 * sources start the queue (queue[0 .. sources): the excesses in increasing order), or -1 when
 * no deficit is reached. On the way it labels every variable it does not reach but an arc with
 * room and a positive reduced cost from a reached one does, with the least such reduced cost
 * (`dist`, `labelled`): when no deficit is reached, that is the start of the next Dijkstra.
 */
function levels(s: FlowState): number {
  const { n, excess, level, queue, adjStart, adj, adjTo, adjCost, flow, r, dist, seen, labelled } = s;
  const search = ++s.search;
  level.fill(-1);
  let qh = 0;
  let qt = 0;
  for (let v = 0; v < n; v++) {
    if (excess[v] > 0) {
      level[v] = 0;
      queue[qt++] = v;
    }
  }
  const sources = qt;
  let reached = false;
  let work = s.work;
  let labelledCount = 0;
  while (qh < qt) {
    const u = queue[qh++];
    if (excess[u] < 0) {
      reached = true;
      continue;
    }
    const ru = r[u];
    const next = level[u] + 1;
    const end = adjStart[u + 1];
    for (let i = adjStart[u]; i < end; i++) {
      const v = adjTo[i];
      if (level[v] >= 0) continue;
      const a = adj[i];
      if (a & 1 && flow[a >> 1] <= 0) continue;
      const reduced = adjCost[i] - ru + r[v];
      if (reduced !== 0) {
        if (seen[v] !== search) {
          seen[v] = search;
          dist[v] = reduced;
          labelled[labelledCount++] = v;
        } else if (reduced < dist[v]) dist[v] = reduced;
        continue;
      }
      level[v] = next;
      queue[qt++] = v;
    }
    work += end - adjStart[u];
  }
  s.work = work + n;
  s.labelledCount = labelledCount;
  s.reachedCount = qt;
  return reached ? sources : -1;
}

/** Blocking flow: from each excess, depth-first along level + 1, without recursion. False when out of budget. */
function blockingFlow(s: FlowState, sources: number): boolean {
  const { n, excess, level, queue, current, pathNode, pathArc, adjStart, adj, adjTo, adjCost, flow, r, budget } = s;
  for (let v = 0; v < n; v++) current[v] = adjStart[v];
  let work = s.work;
  for (let q = 0; q < sources && s.remaining > 0; q++) {
    const src = queue[q];
    while (excess[src] > 0 && level[src] === 0) {
      let depth = 0;
      pathNode[0] = src;
      let found = false;
      while (depth >= 0) {
        const u = pathNode[depth];
        if (excess[u] < 0 && depth > 0) {
          found = true;
          break;
        }
        const ru = r[u];
        const next = level[u] + 1;
        const end = adjStart[u + 1];
        let i = current[u];
        let advanced = false;
        for (; i < end; i++) {
          work++;
          const v = adjTo[i];
          if (level[v] !== next) continue;
          const a = adj[i];
          if (a & 1 && flow[a >> 1] <= 0) continue;
          if (adjCost[i] - ru + r[v] !== 0) continue;
          pathArc[depth] = a;
          pathNode[++depth] = v;
          advanced = true;
          break;
        }
        current[u] = i;
        if (advanced) continue;
        // dead end: no path to a deficit through u in this phase
        level[u] = -1;
        depth--;
        if (depth >= 0) current[pathNode[depth]]++;
      }
      if (work > budget) {
        s.work = work;
        return false;
      }
      if (!found) break;
      work += depth;
      augment(s, src, pathNode[depth], depth);
    }
  }
  s.work = work;
  return true;
}

/** Sends as much as the path from excess `src` to deficit `t` carries. */
function augment(s: FlowState, src: number, t: number, depth: number): void {
  const { excess, flow, pathArc } = s;
  let amount = Math.min(excess[src], -excess[t]);
  for (let d = 0; d < depth; d++) {
    const a = pathArc[d];
    if (a & 1 && flow[a >> 1] < amount) amount = flow[a >> 1];
  }
  for (let d = 0; d < depth; d++) {
    const a = pathArc[d];
    if (a & 1) flow[a >> 1] -= amount;
    else flow[a >> 1] += amount;
  }
  excess[src] -= amount;
  excess[t] += amount;
  s.remaining -= amount;
}

/**
 * Monotone priority queue of vertex ids with small integer keys: Dial's bucket queue (R. B. Dial,
 * "Algorithm 360: shortest-path forest with topological ordering", CACM 12(11), 1969), one
 * doubly linked list per key in a window of BUCKETS keys from `base`; keys past the window wait
 * unsorted in `overflow` and are brought into a new window once the window is empty. Dijkstra's
 * keys never fall below the key last popped, which is all a bucket queue needs. Every step is
 * O(1) except the refill, which happens only when the distances pass the window (the reduced
 * distances of these searches are a few units). Among equal keys the last queued comes first.
 */
class BucketQueue {
  private readonly head = new Int32Array(BUCKETS).fill(-1);
  private readonly next: Int32Array;
  private readonly prev: Int32Array;
  /** Bucket of v, IN_OVERFLOW, or NOT_QUEUED. */
  private readonly where: Int32Array;
  private readonly keys: Float64Array;
  private readonly overflow: Int32Array;
  private overflowCount = 0;
  private base = 0;
  /** Every bucket below `cursor` is empty. */
  private cursor = 0;
  constructor(n: number, arrays: SearchArrays, capacity: number) {
    this.next = arrays.take('queueNext', Int32Array, n, capacity);
    this.prev = arrays.take('queuePrev', Int32Array, n, capacity);
    this.where = arrays.take('queueWhere', Int32Array, n, capacity, NOT_QUEUED);
    this.keys = arrays.take('queueKeys', Float64Array, n, capacity);
    this.overflow = arrays.take('queueOverflow', Int32Array, n, capacity);
  }
  clear(): void {
    const { head, next, where, overflow } = this;
    for (let b = this.cursor; b < BUCKETS; b++) {
      for (let v = head[b]; v >= 0; v = next[v]) where[v] = NOT_QUEUED;
      head[b] = -1;
    }
    for (let i = 0; i < this.overflowCount; i++) where[overflow[i]] = NOT_QUEUED;
    this.overflowCount = 0;
    this.base = 0;
    this.cursor = 0;
  }
  push(v: number, key: number): void {
    this.keys[v] = key;
    const b = key - this.base;
    if (b < BUCKETS) this.link(v, b);
    else {
      this.where[v] = IN_OVERFLOW;
      this.overflow[this.overflowCount++] = v;
    }
  }
  decrease(v: number, key: number): void {
    this.keys[v] = key;
    const at = this.where[v];
    const b = key - this.base;
    if (at >= 0) {
      this.unlink(v, at);
      this.link(v, b);
    } else if (b < BUCKETS) this.link(v, b); // its overflow entry goes stale
  }
  /** The vertex of the smallest key, or -1 when the queue is empty. */
  pop(): number {
    const { head } = this;
    for (;;) {
      while (this.cursor < BUCKETS && head[this.cursor] < 0) this.cursor++;
      if (this.cursor < BUCKETS) break;
      if (!this.refill()) return -1;
    }
    const b = this.cursor;
    const v = head[b];
    this.unlink(v, b);
    this.where[v] = NOT_QUEUED;
    return v;
  }
  /** A new window from the smallest key in the overflow; false when the overflow holds nothing. */
  private refill(): boolean {
    const { overflow, where, keys } = this;
    let live = 0;
    let least = Infinity;
    for (let i = 0; i < this.overflowCount; i++) {
      const v = overflow[i];
      if (where[v] !== IN_OVERFLOW) continue;
      overflow[live++] = v;
      if (keys[v] < least) least = keys[v];
    }
    this.overflowCount = 0;
    if (live === 0) return false;
    this.base = least;
    this.cursor = 0;
    // push writes overflow[k] only for k <= i, entries already read
    for (let i = 0; i < live; i++) {
      const v = overflow[i];
      this.push(v, keys[v]);
    }
    return true;
  }
  private link(v: number, b: number): void {
    const { head, next, prev } = this;
    this.where[v] = b;
    const h = head[b];
    next[v] = h;
    prev[v] = -1;
    if (h >= 0) prev[h] = v;
    head[b] = v;
  }
  private unlink(v: number, b: number): void {
    const { head, next, prev } = this;
    const p = prev[v];
    const q = next[v];
    if (p >= 0) next[p] = q;
    else head[b] = q;
    if (q >= 0) prev[q] = p;
  }
}

/** Keys a BucketQueue holds in buckets at once; larger ones wait in its overflow. */
const BUCKETS = 256;
const NOT_QUEUED = -1;
const IN_OVERFLOW = -2;
