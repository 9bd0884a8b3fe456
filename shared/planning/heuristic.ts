// Method: iterative modulo scheduling (Rau 1994) with initiation interval N on start times T = slot + N*r,
// then register-pressure moves on the lifetime chart and, on small designs, swaps scored by the real engine.
// Convention: a schedule satisfies every constraint T(b) >= T(a) + c by construction, so its slots always admit a retiming.
import type { Design } from '../types';
import { IN, OP, OUT, type PlanProblem, setsFromAssignment, designWithSets } from './problem';
import { compareMetrics, evaluateDesign } from './evaluate';
import type { PlanMetrics, PlanObjective } from './types';

export interface Assignment {
  /** Unit index and slot per operation. */
  unitOf: Int32Array;
  slotOf: Int32Array;
}

export interface ScheduleTimes extends Assignment {
  /** Start time of every schedule node (operations, then the boundary node(s)). */
  T: Float64Array;
}

export interface HeuristicOptions {
  objective: PlanObjective;
  now: () => number;
  /** Clock value (ms) by which to stop improving. */
  deadline: number;
  signal?: { aborted: boolean };
  onProgress?: (p: { phase: string; done?: number; total?: number }) => void;
  /** Largest design (operations) improved by moves scored with the full engine; default 300. */
  maxEngineSearchOps?: number;
  /** Seed of the tie-breaks of restarts. */
  seed?: number;
}

export interface HeuristicResult {
  assignment: Assignment | null;
  /** Lifetime minimum of the schedule's own retiming (a proxy of the engine's figure). */
  proxyRegisters: number | null;
  /** Real metrics of the returned assignment (engine); null on large designs, which the caller scores once. */
  metrics: PlanMetrics | null;
  reason?: string;
  method: string;
  notes: string[];
}

/** Restarts of the scheduler on small designs (each followed by the engine-scored swaps). */
export const RESTARTS = 12;

export const HEURISTIC_METHOD =
  'heuristic: iterative modulo scheduling (Rau 1994) at II = N, register-pressure moves on the lifetime chart, then swaps scored by the engine';

const mod = (a: number, n: number) => ((a % n) + n) % n;

/** Compressed adjacency of the arcs. */
interface Adjacency {
  outStart: Int32Array;
  outArc: Int32Array;
  inStart: Int32Array;
  inArc: Int32Array;
}

function adjacency(p: PlanProblem): Adjacency {
  const S = p.scheduleNodes;
  const outStart = new Int32Array(S + 1);
  const inStart = new Int32Array(S + 1);
  for (const a of p.arcs) {
    outStart[a.a + 1]++;
    inStart[a.b + 1]++;
  }
  for (let i = 0; i < S; i++) {
    outStart[i + 1] += outStart[i];
    inStart[i + 1] += inStart[i];
  }
  const outArc = new Int32Array(p.arcs.length);
  const inArc = new Int32Array(p.arcs.length);
  const fo = outStart.slice(0, S);
  const fi = inStart.slice(0, S);
  p.arcs.forEach((a, k) => {
    outArc[fo[a.a]++] = k;
    inArc[fi[a.b]++] = k;
  });
  return { outStart, outArc, inStart, inArc };
}

/** Fewest stages among the units of each operation's kind (its pin's unit when pinned). */
export function minimumStages(p: PlanProblem): Int32Array {
  const n = p.ops.length;
  const out = new Int32Array(p.scheduleNodes);
  const byKind = new Map<string, number>();
  for (const [kind, list] of p.kindUnits) byKind.set(kind, Math.min(...list.map((k) => p.unitStages[k])));
  for (let o = 0; o < n; o++) out[o] = p.pinUnit[o] >= 0 ? p.unitStages[p.pinUnit[o]] : (byKind.get(p.opKind[o]) ?? 0);
  return out;
}

/**
 * Longest-path heights H(a) = max(0, max over arcs a->b of c + H(b)) with the fewest stages, by a
 * FIFO label-correcting search. A positive cycle (no schedule at this N whatever the units) gives null
 * and the arcs of a cycle found.
 */
export function heights(p: PlanProblem, stages: Int32Array, adj: Adjacency = adjacency(p)): { H: Float64Array } | { cycle: number[] } {
  const S = p.scheduleNodes;
  const H = new Float64Array(S);
  const count = new Int32Array(S);
  const inQueue = new Uint8Array(S);
  const via = new Int32Array(S).fill(-1);
  const queue: number[] = [];
  for (let i = 0; i < S; i++) {
    queue.push(i);
    inQueue[i] = 1;
  }
  let head = 0;
  while (head < queue.length) {
    const b = queue[head++];
    inQueue[b] = 0;
    for (let q = adj.inStart[b]; q < adj.inStart[b + 1]; q++) {
      const k = adj.inArc[q];
      const arc = p.arcs[k];
      const c = arc.base + (arc.stages ? stages[arc.a] : 0);
      if (c + H[b] > H[arc.a]) {
        H[arc.a] = c + H[b];
        via[arc.a] = k;
        if (++count[arc.a] > S + 1) return { cycle: cycleFrom(p, via, arc.a) };
        if (!inQueue[arc.a]) {
          inQueue[arc.a] = 1;
          queue.push(arc.a);
        }
      }
    }
    if (head > 1 << 22) {
      queue.splice(0, head);
      head = 0;
    }
  }
  return { H };
}

const heightsCache = new WeakMap<PlanProblem, { H: Float64Array } | { cycle: number[] }>();

/** heights() with each operation's fewest stages, computed once per problem (the bounds and the heuristic both need it). */
export function minimumHeights(p: PlanProblem, adj?: Adjacency): { H: Float64Array } | { cycle: number[] } {
  let h = heightsCache.get(p);
  if (!h) {
    h = heights(p, minimumStages(p), adj ?? adjacency(p));
    heightsCache.set(p, h);
  }
  return h;
}

function cycleFrom(p: PlanProblem, via: Int32Array, start: number): number[] {
  // walk the predecessor arcs S times to land on the cycle, then collect it
  let x = start;
  for (let i = 0; i < p.scheduleNodes; i++) {
    if (via[x] < 0) return []; // the chain ends at a sink: no cycle to name, the caller still knows there is one
    x = p.arcs[via[x]].b;
  }
  const arcs: number[] = [];
  let y = x;
  do {
    const k = via[y];
    if (k < 0) break;
    arcs.push(k);
    y = p.arcs[k].b;
  } while (y !== x && arcs.length <= p.scheduleNodes);
  return arcs;
}

/** Max-heap of schedule nodes by priority (height), ties to the lower index. */
class Heap {
  private items: number[] = [];
  constructor(private readonly key: Float64Array) {}
  get size(): number {
    return this.items.length;
  }
  private less(i: number, j: number): boolean {
    const a = this.items[i];
    const b = this.items[j];
    return this.key[a] > this.key[b] || (this.key[a] === this.key[b] && a < b);
  }
  push(x: number): void {
    const it = this.items;
    it.push(x);
    let i = it.length - 1;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!this.less(i, parent)) break;
      [it[i], it[parent]] = [it[parent], it[i]];
      i = parent;
    }
  }
  pop(): number {
    const it = this.items;
    const top = it[0];
    const last = it.pop()!;
    if (it.length) {
      it[0] = last;
      let i = 0;
      for (;;) {
        const l = 2 * i + 1;
        const r = l + 1;
        let m = i;
        if (l < it.length && this.less(l, m)) m = l;
        if (r < it.length && this.less(r, m)) m = r;
        if (m === i) break;
        [it[i], it[m]] = [it[m], it[i]];
        i = m;
      }
    }
    return top;
  }
}

/**
 * Iterative modulo scheduling: each node, highest first, goes to the earliest time in
 * [Estart, Estart + N - 1] with a free unit of its kind at that partition (pins: their unit and
 * slot only; boundary nodes: multiples of N, no unit); when none is free it takes Estart (or one
 * past its previous time) and evicts the occupant; successors whose constraint it breaks are
 * unscheduled. Stops after `budget` placements.
 */
function moduloSchedule(p: PlanProblem, adj: Adjacency, H: Float64Array, budget: number, rnd: () => number): ScheduleTimes | null {
  const N = p.N;
  const n = p.ops.length;
  const S = p.scheduleNodes;
  const U = p.units.length;
  const T = new Float64Array(S);
  const scheduled = new Uint8Array(S);
  const prev = new Float64Array(S).fill(NaN);
  const unitOf = new Int32Array(n).fill(-1);
  const occupant = new Int32Array(U * N).fill(-1);
  const reserved = new Int32Array(U * N).fill(-1);
  for (let o = 0; o < n; o++) if (p.pinUnit[o] >= 0) reserved[p.pinUnit[o] * N + p.pinSlot[o]] = o;
  // free lists per (kind, partition) of unreserved, unoccupied cells
  const kindIndex = new Map<string, number>();
  p.kinds.forEach((k, i) => kindIndex.set(k, i));
  for (const k of p.kindUnits.keys()) if (!kindIndex.has(k)) kindIndex.set(k, kindIndex.size);
  const kindOfUnit = new Int32Array(U);
  for (const [kind, list] of p.kindUnits) for (const k of list) kindOfUnit[k] = kindIndex.get(kind)!;
  const freeList: Int32Array[] = [];
  const freeLen = new Int32Array(kindIndex.size * N);
  const freePos = new Int32Array(U * N).fill(-1);
  for (const [kind, list] of p.kindUnits) {
    const ki = kindIndex.get(kind)!;
    for (let r = 0; r < N; r++) {
      const arr = new Int32Array(list.length);
      let len = 0;
      // a random order of the units spreads the operations of a restart differently
      const order = list.slice();
      for (let i = order.length - 1; i > 0; i--) {
        const j = Math.floor(rnd() * (i + 1));
        [order[i], order[j]] = [order[j], order[i]];
      }
      for (const k of order) {
        if (reserved[k * N + r] >= 0) continue;
        freePos[k * N + r] = len;
        arr[len++] = k;
      }
      freeList[ki * N + r] = arr;
      freeLen[ki * N + r] = len;
    }
  }
  const takeCell = (k: number, r: number) => {
    const cell = k * N + r;
    const pos = freePos[cell];
    if (pos < 0) return;
    const kr = kindOfUnit[k] * N + r;
    const arr = freeList[kr];
    const last = arr[--freeLen[kr]];
    arr[pos] = last;
    freePos[last * N + r] = pos;
    freePos[cell] = -1;
  };
  const releaseCell = (k: number, r: number) => {
    const cell = k * N + r;
    if (reserved[cell] >= 0 || freePos[cell] >= 0) return;
    const kr = kindOfUnit[k] * N + r;
    freePos[cell] = freeLen[kr];
    freeList[kr][freeLen[kr]++] = k;
  };
  const stagesOf = (x: number) => (x < n ? (unitOf[x] >= 0 ? p.unitStages[unitOf[x]] : 0) : 0);
  const cost = (k: number) => {
    const arc = p.arcs[k];
    return arc.base + (arc.stages ? stagesOf(arc.a) : 0);
  };
  const unschedule = (x: number) => {
    if (!scheduled[x]) return;
    scheduled[x] = 0;
    if (x < n) {
      const k = unitOf[x];
      const r = mod(T[x], N);
      occupant[k * N + r] = -1;
      releaseCell(k, r);
      unitOf[x] = -1;
    }
    heap.push(x);
  };
  const place = (x: number, t: number, k: number) => {
    T[x] = t;
    scheduled[x] = 1;
    prev[x] = t;
    if (x < n) {
      const r = mod(t, N);
      const cell = k * N + r;
      const other = occupant[cell];
      if (other >= 0 && other !== x) unschedule(other);
      occupant[cell] = x;
      takeCell(k, r);
      unitOf[x] = k;
    }
  };

  const heap = new Heap(H);
  for (let x = 0; x < S; x++) heap.push(x);
  let left = S;
  let steps = 0;
  while (heap.size > 0) {
    const x = heap.pop();
    if (scheduled[x]) continue;
    if (steps++ > budget) return null;
    let estart = -Infinity;
    for (let q = adj.inStart[x]; q < adj.inStart[x + 1]; q++) {
      const k = adj.inArc[q];
      const a = p.arcs[k].a;
      if (a !== x && scheduled[a]) estart = Math.max(estart, T[a] + cost(k));
    }
    if (estart === -Infinity) estart = 0;
    let t = NaN;
    let unit = -1;
    if (x >= n) {
      t = Math.ceil(estart / N) * N;
    } else if (p.pinUnit[x] >= 0) {
      t = estart + mod(p.pinSlot[x] - estart, N);
      unit = p.pinUnit[x];
    } else {
      const ki = kindIndex.get(p.opKind[x])!;
      for (let d = 0; d < N; d++) {
        const r = mod(estart + d, N);
        if (freeLen[ki * N + r] > 0) {
          t = estart + d;
          unit = freeList[ki * N + r][freeLen[ki * N + r] - 1];
          break;
        }
      }
      if (unit < 0) {
        // no free unit in the window: force a time and evict a non-pinned occupant
        let t0 = Number.isNaN(prev[x]) || estart > prev[x] ? estart : prev[x] + 1;
        const units = p.kindUnits.get(p.opKind[x])!;
        for (let d = 0; d < N && unit < 0; d++) {
          const r = mod(t0 + d, N);
          const start = Math.floor(rnd() * units.length);
          for (let i = 0; i < units.length; i++) {
            const k = units[(start + i) % units.length];
            if (reserved[k * N + r] < 0) {
              unit = k;
              t = t0 + d;
              break;
            }
          }
        }
        if (unit < 0) return null; // every cell of the kind is pinned to other operations
        t0 = t;
      }
    }
    place(x, t, unit);
    left--;
    // successors whose constraint the new time breaks are unscheduled
    for (let q = adj.outStart[x]; q < adj.outStart[x + 1]; q++) {
      const k = adj.outArc[q];
      const b = p.arcs[k].b;
      if (b === x) continue;
      if (scheduled[b] && T[b] < t + cost(k)) unschedule(b);
    }
    // a predecessor scheduled after its successor was placed can be broken too (evictions move things)
    for (let q = adj.inStart[x]; q < adj.inStart[x + 1]; q++) {
      const k = adj.inArc[q];
      const a = p.arcs[k].a;
      if (a === x || !scheduled[a]) continue;
      if (t < T[a] + cost(k)) unschedule(a);
    }
  }
  void left;
  const slotOf = new Int32Array(n);
  for (let o = 0; o < n; o++) slotOf[o] = mod(T[o], N);
  return { T, unitOf, slotOf };
}

// ------------------------------------------------------------------ lifetime chart of a schedule

/** Lifetime minimum of a schedule under its own retiming (the heuristic's proxy of the engine's figure). */
export function scheduleRegisters(p: PlanProblem, s: ScheduleTimes): number {
  return new FastChart(p, s).max();
}

/** The same chart, built in one pass with edge lists (used on large designs). */
class FastChart {
  private readonly live: Float64Array;
  constructor(p: PlanProblem, s: ScheduleTimes) {
    const N = p.N;
    const nN = p.nodeIds.length;
    const longest = new Float64Array(nN);
    this.live = new Float64Array(N);
    const add = (tIn: number, len: number) => {
      if (len <= 0) return;
      const whole = Math.floor(len / N);
      if (whole) for (let t = 0; t < N; t++) this.live[t] += whole;
      for (let i = 1; i <= len % N; i++) this.live[mod(tIn + i, N)]++;
    };
    const time = (v: number) =>
      p.role[v] === OP ? s.T[p.opOf[v]] : p.role[v] === IN ? s.T[p.inNode] + Math.max(0, p.boundarySlot[v]) : s.T[p.outNode] + Math.max(0, p.boundarySlot[v]);
    for (let e = 0; e < p.edgeFrom.length; e++) {
      const u = p.edgeFrom[e];
      const v = p.edgeTo[e];
      if (p.role[v] === OUT && p.boundarySlot[v] < 0) continue;
      const w = p.edgeDelays[e];
      const tv = time(v);
      if (p.role[u] === IN && p.boundarySlot[u] < 0) {
        add(mod(tv, N), tv - mod(tv, N) - s.T[p.inNode] + N * w);
        continue;
      }
      const P = p.role[u] === OP ? p.unitStages[s.unitOf[p.opOf[u]]] : 0;
      const d = N * w - P + tv - time(u);
      if (d > longest[u]) longest[u] = d;
    }
    for (let u = 0; u < nN; u++) {
      if (longest[u] <= 0) continue;
      const tIn = p.role[u] === OP ? s.slotOf[p.opOf[u]] + p.unitStages[s.unitOf[p.opOf[u]]] : p.boundarySlot[u];
      add(tIn, longest[u]);
    }
  }
  max(): number {
    let m = 0;
    for (const x of this.live) if (x > m) m = x;
    return m;
  }
}

/**
 * Tries of register-pressure moves per schedule node, summed over the passes: the work budget of
 * the moves (each try costs O(degree x N)). On the generated banks the moves gain 0.1 % of the
 * registers at 10,000 operations and nothing at 67,000 while costing as much as the analysis, so
 * they stop at this budget rather than run four full passes (docs/planning.md).
 */
export const PRESSURE_TRIES_PER_NODE = 6;

/**
 * Register-pressure moves: each schedule node in turn goes to the time within its window (every
 * constraint kept) that lowers the chart's maximum, then the sum of lifetimes (then, for the
 * latency objective, latency first). Boundary nodes move by whole iterations. Local updates only.
 * At most `PRESSURE_TRIES_PER_NODE` x nodes + 20,000 tries; true when that budget ran out.
 */
function pressureMoves(p: PlanProblem, adj: Adjacency, s: ScheduleTimes, objective: PlanObjective, deadline: number, now: () => number): boolean {
  const N = p.N;
  const n = p.ops.length;
  const S = p.scheduleNodes;
  const U = p.units.length;
  const { T, unitOf } = s;
  const occupant = new Int32Array(U * N).fill(-1);
  for (let o = 0; o < n; o++) occupant[unitOf[o] * N + mod(T[o], N)] = o;
  // free, unreserved cells per (kind, partition), so a move finds a unit without scanning the kind
  const kindOf = new Map<string, number>();
  const unitKind = new Int32Array(U);
  for (const [kind, list] of p.kindUnits) {
    kindOf.set(kind, kindOf.size);
    for (const k of list) unitKind[k] = kindOf.get(kind)!;
  }
  const freeCells: number[][] = Array.from({ length: kindOf.size * N }, () => []);
  const freePos = new Int32Array(U * N).fill(-1);
  const release = (k: number, r: number) => {
    const cell = k * N + r;
    if (freePos[cell] >= 0 || isReserved(p, k, r)) return;
    const list = freeCells[unitKind[k] * N + r];
    freePos[cell] = list.length;
    list.push(k);
  };
  const take = (k: number, r: number) => {
    const cell = k * N + r;
    const at = freePos[cell];
    if (at < 0) return;
    const list = freeCells[unitKind[k] * N + r];
    const last = list.pop()!;
    if (last !== k) {
      list[at] = last;
      freePos[last * N + r] = at;
    }
    freePos[cell] = -1;
  };
  for (let k = 0; k < U; k++) for (let r = 0; r < N; r++) if (occupant[k * N + r] < 0) release(k, r);
  // variables touched by a node's move: its own DFG node, the producers feeding it, held-input edges into it
  const nodeOfSched = (x: number): number[] => {
    if (x < n) return [p.ops[x]];
    const list: number[] = [];
    for (let v = 0; v < p.nodeIds.length; v++) {
      if (x === p.inNode && p.role[v] === IN) list.push(v);
      if (x === p.outNode && p.role[v] === OUT) list.push(v);
    }
    return list;
  };
  // per DFG node: edges in and out (plain lists; built once)
  const nN = p.nodeIds.length;
  const inEdges: number[][] = Array.from({ length: nN }, () => []);
  const outEdges: number[][] = Array.from({ length: nN }, () => []);
  for (let e = 0; e < p.edgeFrom.length; e++) {
    inEdges[p.edgeTo[e]].push(e);
    outEdges[p.edgeFrom[e]].push(e);
  }
  const chart = new LocalChart(p, s, outEdges);
  const cost = (k: number) => {
    const arc = p.arcs[k];
    return arc.base + (arc.stages && arc.a < n ? p.unitStages[unitOf[arc.a]] : 0);
  };
  const latency = () => (p.hasInputs && p.hasOutputs ? (T[p.outNode] - T[p.inNode]) / N : 0);
  const score = (): [number, number, number] => {
    const m = chart.max();
    return objective === 'latency' ? [latency(), m, chart.sum] : [m, chart.sum, latency()];
  };
  const better = (a: number[], b: number[]) => a[0] < b[0] || (a[0] === b[0] && (a[1] < b[1] || (a[1] === b[1] && a[2] < b[2])));

  const affected = (x: number): number[] => {
    const vars = new Set<number>();
    for (const v of nodeOfSched(x)) {
      vars.add(v);
      for (const e of outEdges[v]) {
        const h = chart.heldOf(e);
        if (h >= 0) vars.add(h);
      }
      for (const e of inEdges[v]) {
        vars.add(p.edgeFrom[e]);
        const h = chart.heldOf(e);
        if (h >= 0) vars.add(h);
      }
    }
    return [...vars];
  };

  let tries = PRESSURE_TRIES_PER_NODE * S + 20_000;
  for (let pass = 0; pass < 4; pass++) {
    let improved = false;
    // later nodes first on even passes (pushes producers towards their consumers), earlier first on odd ones
    const order = Array.from({ length: S }, (_, i) => i).sort((a, b) => (pass % 2 === 0 ? T[b] - T[a] : T[a] - T[b]));
    for (const x of order) {
      if (now() > deadline) return false;
      if (tries <= 0) return true;
      let lo = -Infinity;
      let hi = Infinity;
      for (let q = adj.inStart[x]; q < adj.inStart[x + 1]; q++) {
        const k = adj.inArc[q];
        if (p.arcs[k].a !== x) lo = Math.max(lo, T[p.arcs[k].a] + cost(k));
      }
      for (let q = adj.outStart[x]; q < adj.outStart[x + 1]; q++) {
        const k = adj.outArc[q];
        if (p.arcs[k].b !== x) hi = Math.min(hi, T[p.arcs[k].b] - cost(k));
      }
      if (lo === -Infinity) lo = T[x] - 2 * N;
      if (hi === Infinity) hi = T[x] + 2 * N;
      const pinned = x < n && p.pinUnit[x] >= 0;
      const step = x >= n || pinned ? N : 1;
      const candidates: number[] = [];
      // times of the same partition (multiples of N away) for boundary and pinned nodes; all times otherwise, nearest first
      const first = step === N ? lo + mod(T[x] - lo, N) : lo;
      for (let t = first; t <= hi && candidates.length < 4 * N; t += step) if (t !== T[x]) candidates.push(t);
      if (!candidates.length) continue;
      tries -= candidates.length;
      const vars = affected(x);
      const before = score();
      const t0 = T[x];
      const u0 = x < n ? unitOf[x] : -1;
      let best: { t: number; k: number; sc: [number, number, number] } | null = null;
      for (const t of candidates) {
        let k = u0;
        if (x < n && !pinned && mod(t, N) !== mod(t0, N)) {
          // a free unit of the same kind and stages at the new partition (its own unit first)
          const r = mod(t, N);
          k = -1;
          if (freePos[u0 * N + r] >= 0) k = u0;
          else {
            for (const c of freeCells[unitKind[u0] * N + r]) {
              if (p.unitStages[c] === p.unitStages[u0]) {
                k = c;
                break;
              }
            }
          }
          if (k < 0) continue;
        }
        T[x] = t;
        if (x < n) unitOf[x] = k;
        for (const v of vars) chart.update(v);
        const sc = score();
        if (better(sc, best ? best.sc : before)) best = { t, k, sc };
        T[x] = t0;
        if (x < n) unitOf[x] = u0;
        for (const v of vars) chart.update(v);
      }
      if (best) {
        if (x < n) {
          occupant[u0 * N + mod(t0, N)] = -1;
          release(u0, mod(t0, N));
          occupant[best.k * N + mod(best.t, N)] = x;
          take(best.k, mod(best.t, N));
          unitOf[x] = best.k;
          s.slotOf[x] = mod(best.t, N);
        }
        T[x] = best.t;
        for (const v of vars) chart.update(v);
        improved = true;
      }
    }
    if (!improved) break;
  }
  return false;
}

const reservedCache = new WeakMap<PlanProblem, Int32Array>();

/** Pins reserve their cell: only their own operation may use it. */
function isReserved(p: PlanProblem, k: number, r: number): boolean {
  let cells = reservedCache.get(p);
  if (!cells) {
    cells = new Int32Array(p.units.length * p.N).fill(-1);
    for (let o = 0; o < p.ops.length; o++) if (p.pinUnit[o] >= 0) cells[p.pinUnit[o] * p.N + p.pinSlot[o]] = o;
    reservedCache.set(p, cells);
  }
  return cells[k * p.N + r] >= 0;
}

/** The chart with per-variable updates, for pressureMoves. */
class LocalChart {
  readonly live: Float64Array;
  sum = 0;
  private readonly tIn: Float64Array;
  private readonly len: Float64Array;
  private readonly heldIdx: Int32Array;
  private readonly heldEdge: Int32Array;
  constructor(
    private readonly p: PlanProblem,
    private readonly s: ScheduleTimes,
    private readonly outEdges: number[][],
  ) {
    const nN = p.nodeIds.length;
    const m = p.edgeFrom.length;
    this.heldIdx = new Int32Array(m).fill(-1);
    const held: number[] = [];
    for (let e = 0; e < m; e++) {
      const u = p.edgeFrom[e];
      if (p.role[u] === IN && p.boundarySlot[u] < 0) {
        this.heldIdx[e] = nN + held.length;
        held.push(e);
      }
    }
    this.heldEdge = Int32Array.from(held);
    this.tIn = new Float64Array(nN + held.length).fill(NaN);
    this.len = new Float64Array(nN + held.length);
    this.live = new Float64Array(p.N);
    for (let v = 0; v < nN + held.length; v++) this.update(v);
  }
  heldOf(e: number): number {
    return this.heldIdx[e];
  }
  private time(v: number): number {
    const p = this.p;
    const T = this.s.T;
    return p.role[v] === OP ? T[p.opOf[v]] : p.role[v] === IN ? T[p.inNode] + Math.max(0, p.boundarySlot[v]) : T[p.outNode] + Math.max(0, p.boundarySlot[v]);
  }
  private delay(e: number): number {
    const p = this.p;
    const N = p.N;
    const u = p.edgeFrom[e];
    const v = p.edgeTo[e];
    if (p.role[v] === OUT && p.boundarySlot[v] < 0) return NaN;
    const tv = this.time(v);
    const w = p.edgeDelays[e];
    if (p.role[u] === IN && p.boundarySlot[u] < 0) return tv - mod(tv, N) - this.s.T[p.inNode] + N * w;
    const P = p.role[u] === OP ? p.unitStages[this.s.unitOf[p.opOf[u]]] : 0;
    return N * w - P + tv - this.time(u);
  }
  private add(tIn: number, len: number, sign: number): void {
    if (Number.isNaN(tIn) || len <= 0) return;
    const N = this.p.N;
    const whole = Math.floor(len / N);
    if (whole) for (let t = 0; t < N; t++) this.live[t] += sign * whole;
    const rest = len % N;
    for (let i = 1; i <= rest; i++) this.live[mod(tIn + i, N)] += sign;
    this.sum += sign * len;
  }
  update(v: number): void {
    const p = this.p;
    const N = p.N;
    let tIn = NaN;
    let len = 0;
    if (v >= p.nodeIds.length) {
      const e = this.heldEdge[v - p.nodeIds.length];
      const d = this.delay(e);
      if (d > 0) {
        tIn = mod(this.time(p.edgeTo[e]), N);
        len = d;
      }
    } else if (p.role[v] === OP || (p.role[v] === IN && p.boundarySlot[v] >= 0)) {
      let longest = 0;
      for (const e of this.outEdges[v]) {
        const d = this.delay(e);
        if (d > longest) longest = d;
      }
      if (longest > 0) {
        len = longest;
        tIn = p.role[v] === OP ? mod(this.s.T[p.opOf[v]], N) + p.unitStages[this.s.unitOf[p.opOf[v]]] : p.boundarySlot[v];
      }
    }
    this.add(this.tIn[v], this.len[v], -1);
    this.tIn[v] = tIn;
    this.len[v] = len;
    this.add(tIn, len, 1);
  }
  max(): number {
    let m = 0;
    for (const x of this.live) if (x > m) m = x;
    return m;
  }
}

// ------------------------------------------------------------------ moves scored by the engine

/**
 * Swaps of two operations of one kind (unit and slot exchanged) and moves to free cells, each
 * scored by the full engine (evaluate.ts) and kept only when the plan stays feasible and gets
 * better in the objective's order. First improvement, round-robin, until the deadline.
 */
export function engineSearch(
  p: PlanProblem,
  a: Assignment,
  start: PlanMetrics,
  objective: PlanObjective,
  deadline: number,
  now: () => number,
  signal?: { aborted: boolean },
): { assignment: Assignment; metrics: PlanMetrics; evaluations: number } {
  const N = p.N;
  const n = p.ops.length;
  const unitOf = a.unitOf.slice();
  const slotOf = a.slotOf.slice();
  let best = start;
  let evaluations = 0;
  const score = (): PlanMetrics | null => {
    evaluations++;
    const ev = evaluateDesign(designWithSets(p.design, N, p.units, setsFromAssignment(p, unitOf, slotOf)));
    return ev.feasible ? ev.metrics : null;
  };
  const occupant = new Int32Array(p.units.length * N).fill(-1);
  for (let o = 0; o < n; o++) occupant[unitOf[o] * N + slotOf[o]] = o;
  let improved = true;
  while (improved) {
    improved = false;
    for (let o = 0; o < n; o++) {
      if (p.pinUnit[o] >= 0) continue;
      for (const k of p.kindUnits.get(p.opKind[o])!) {
        for (let r = 0; r < N; r++) {
          if (now() > deadline || signal?.aborted) return { assignment: { unitOf, slotOf }, metrics: best, evaluations };
          if (k === unitOf[o] && r === slotOf[o]) continue;
          const other = occupant[k * N + r];
          if (other < 0 && isReserved(p, k, r)) continue;
          if (other >= 0 && (p.pinUnit[other] >= 0 || other < o)) continue; // each pair once
          const [k0, r0] = [unitOf[o], slotOf[o]];
          unitOf[o] = k;
          slotOf[o] = r;
          if (other >= 0) {
            unitOf[other] = k0;
            slotOf[other] = r0;
          }
          const m = score();
          if (m && compareMetrics(m, best, objective) < 0) {
            best = m;
            occupant[k0 * N + r0] = other;
            occupant[k * N + r] = o;
            improved = true;
          } else {
            unitOf[o] = k0;
            slotOf[o] = r0;
            if (other >= 0) {
              unitOf[other] = k;
              slotOf[other] = r;
            }
          }
        }
      }
    }
  }
  return { assignment: { unitOf, slotOf }, metrics: best, evaluations };
}

// ------------------------------------------------------------------ entry point

/** Small deterministic generator for restarts (mulberry32). */
function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/**
 * A feasible plan or none. Iterative modulo scheduling (up to a few restarts with other
 * tie-breaks), register-pressure moves, then on small designs engine-scored swaps. The returned
 * assignment has been checked by the engine (a feasible retiming exists).
 */
export function heuristicPlan(p: PlanProblem, options: HeuristicOptions): HeuristicResult {
  const notes: string[] = [];
  const n = p.ops.length;
  const now = options.now;
  const adj = adjacency(p);
  const h = minimumHeights(p, adj);
  if ('cycle' in h) {
    return { assignment: null, proxyRegisters: null, metrics: null, method: HEURISTIC_METHOD, notes, reason: 'a loop has more pipeline stages than its delays leave room for at this N' };
  }
  for (let o = 0; o < n; o++) {
    if (!p.kindUnits.has(p.opKind[o])) {
      return { assignment: null, proxyRegisters: null, metrics: null, method: HEURISTIC_METHOD, notes, reason: `no unit of kind ${p.opKind[o]}` };
    }
  }
  let sched: ScheduleTimes | null = null;
  const attempts = 6;
  for (let i = 0; i < attempts && !sched; i++) {
    if (options.signal?.aborted) break;
    options.onProgress?.({ phase: 'modulo scheduling', done: i, total: attempts });
    const rnd = random((options.seed ?? 1) + i * 7919);
    // later restarts perturb the priorities a little, so ties break differently
    const H = i === 0 ? h.H : h.H.map((x) => x + rnd() * 0.9);
    sched = moduloSchedule(p, adj, H, 20 * p.scheduleNodes + 100 * (i + 1), rnd);
    if (!sched) notes.push(`modulo scheduling attempt ${i + 1} ran out of its budget`);
    if (now() > options.deadline && i > 0) break;
  }
  if (!sched) {
    return { assignment: null, proxyRegisters: null, metrics: null, method: HEURISTIC_METHOD, notes, reason: 'iterative modulo scheduling found no schedule within its budget' };
  }
  options.onProgress?.({ phase: 'register-pressure moves' });
  if (pressureMoves(p, adj, sched, options.objective, options.deadline, now)) notes.push('the register-pressure moves stopped at their work budget');
  const proxy = scheduleRegisters(p, sched);
  let assignment: Assignment = { unitOf: sched.unitOf, slotOf: sched.slotOf };
  const small = n <= (options.maxEngineSearchOps ?? 300);
  if (!small) {
    // Large designs: the caller scores the plan once with the engine (plan.ts); no search by engine runs here.
    return { assignment, proxyRegisters: proxy, metrics: null, method: HEURISTIC_METHOD, notes };
  }
  const design: Design = designWithSets(p.design, p.N, p.units, setsFromAssignment(p, assignment.unitOf, assignment.slotOf));
  const ev = evaluateDesign(design);
  if (!ev.feasible || !ev.metrics) {
    // cannot happen: the schedule's own retiming satisfies every constraint
    return { assignment: null, proxyRegisters: proxy, metrics: null, method: HEURISTIC_METHOD, notes, reason: `internal: the schedule failed the engine's check (${ev.reason})` };
  }
  let metrics = ev.metrics;
  let evaluations = 0;
  if (now() < options.deadline && !options.signal?.aborted) {
    options.onProgress?.({ phase: 'swaps scored by the engine' });
    const r = engineSearch(p, assignment, metrics, options.objective, options.deadline, now, options.signal);
    assignment = r.assignment;
    metrics = r.metrics;
    evaluations += r.evaluations;
  }
  // Restarts: other tie-breaks of the modulo scheduler, each improved the same way, the best kept;
  // at most RESTARTS, and only while half of the time is left.
  const half = now() + (options.deadline - now()) / 2;
  let restarts = 0;
  for (let i = 0; i < RESTARTS && now() < half && !options.signal?.aborted; i++) {
    const rnd = random((options.seed ?? 1) * 31 + 1000 + i);
    const H = h.H.map((x) => x + rnd() * (1 + (i % 4)));
    const again = moduloSchedule(p, adj, H, 20 * p.scheduleNodes + 100, rnd);
    if (!again) continue;
    restarts++;
    pressureMoves(p, adj, again, options.objective, half, now);
    const a2: Assignment = { unitOf: again.unitOf, slotOf: again.slotOf };
    const ev2 = evaluateDesign(designWithSets(p.design, p.N, p.units, setsFromAssignment(p, a2.unitOf, a2.slotOf)));
    if (!ev2.feasible || !ev2.metrics) continue;
    const r = engineSearch(p, a2, ev2.metrics, options.objective, half, now, options.signal);
    evaluations += r.evaluations + 1;
    if (compareMetrics(r.metrics, metrics, options.objective) < 0) {
      assignment = r.assignment;
      metrics = r.metrics;
    }
  }
  notes.push(`${evaluations} swaps and moves scored by the engine, ${restarts} restart(s)`);
  return { assignment, proxyRegisters: proxy, metrics, method: HEURISTIC_METHOD, notes };
}
