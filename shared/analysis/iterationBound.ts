// Method: iteration bound as a maximum cycle ratio by Howard's policy iteration (Cochet-Terrasson 1998).
// Convention: exact decimal node times, integer arithmetic per strongly connected component.
import type { Design, IterationBound } from '../types';
import { bucket, OPERATION, stronglyConnected, type IndexedGraph } from './graph';
import { ceilDiv, decimalToRational, gcd, reduce, type Rational } from '../fraction';

/** Integer node weights: exact numbers while every value stays below 2^53, else bigints. */
export type IntegerWeights = Float64Array | bigint[];

/** Computation time of node i: its own `time`, else its kind's, else its unit's stages; 0 for boundary nodes. */
export function nodeTime(design: Design, g: IndexedGraph, i: number): number {
  if (g.role[i] !== OPERATION) return 0;
  const node = design.nodes[i];
  if (node.time !== undefined && node.time !== null) return node.time;
  const kindTime = design.kinds?.[node.kind]?.time;
  if (kindTime !== undefined && kindTime !== null) return kindTime;
  return g.stages[i];
}

/**
 * Node times as integers over one common denominator: each time is read as the exact decimal
 * it prints as (fraction.ts), and `scale` is the least common multiple of the denominators.
 */
export function scaledNodeTimes(design: Design, g: IndexedGraph): { weights: IntegerWeights; scale: bigint } {
  const times = new Float64Array(g.nodeCount);
  const exact = new Map<number, Rational>();
  for (let i = 0; i < g.nodeCount; i++) {
    const t = nodeTime(design, g, i);
    times[i] = t;
    if (!exact.has(t)) exact.set(t, decimalToRational(t));
  }
  let scale = 1n;
  for (const r of exact.values()) if (r.den !== 1n) scale = (scale / gcd(scale, r.den)) * r.den;
  const scaled = new Map<number, bigint>();
  let safe = true;
  for (const [t, r] of exact) {
    const v = r.num * (scale / r.den);
    scaled.set(t, v);
    if (v > BigInt(Number.MAX_SAFE_INTEGER)) safe = false;
  }
  if (!safe) return { weights: Array.from(times, (t) => scaled.get(t)!), scale };
  const asNumber = new Map<number, number>();
  for (const [t, v] of scaled) asNumber.set(t, Number(v));
  return { weights: times.map((t) => asNumber.get(t)!), scale };
}

export interface CycleRatio {
  /** sum of weights / sum of delays on the critical loop, reduced. */
  num: bigint;
  den: bigint;
  /** Node indices of the critical loop in edge order, starting at its first node in file order. */
  loop: number[];
}

/** Components of the DFG that contain a loop, and the in-component adjacency. */
export interface LoopStructure {
  comp: Int32Array;
  /** Nodes of each component that has a loop. */
  cyclic: number[][];
  inStart: Int32Array;
  inEdge: Int32Array;
}

export function loopStructure(g: IndexedGraph): LoopStructure {
  const { comp, count } = stronglyConnected(g.nodeCount, g.outStart, g.outEdge, g.edgeTo);
  const size = new Int32Array(count);
  for (let i = 0; i < g.nodeCount; i++) size[comp[i]]++;
  const hasLoop = new Uint8Array(count);
  for (let c = 0; c < count; c++) if (size[c] > 1) hasLoop[c] = 1;
  for (let e = 0; e < g.edgeCount; e++) if (g.edgeFrom[e] === g.edgeTo[e]) hasLoop[comp[g.edgeFrom[e]]] = 1;
  const members = new Map<number, number[]>();
  for (let i = 0; i < g.nodeCount; i++) {
    const c = comp[i];
    if (!hasLoop[c]) continue;
    let list = members.get(c);
    if (!list) members.set(c, (list = []));
    list.push(i);
  }
  const { start: inStart, items: inEdge } = bucket(g.nodeCount, g.edgeTo);
  return { comp, cyclic: [...members.values()], inStart, inEdge };
}

/** A number or a bigint, never both in one run: + - * / % and < read the same on either. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Int = any;

/**
 * Maximum over loops of sum(weight of nodes) / sum(delays of edges), exactly; null when the DFG
 * has no loop. Weights are nonnegative integers; every loop must carry a delay (a valid design).
 *
 * Per component, Howard's policy iteration: each node follows one out-edge (the policy); the
 * best loop A/B of the policy graph sets node potentials x along policy edges with edge gain
 * a(U)*B - A*w(e); any edge with x(V) + gain > x(U) improves the policy. All arithmetic is on
 * integers (numbers while provably below 2^53, else bigints), so the pass that finds no
 * improvement is an exact certificate: x(U) >= x(V) + a(U)*B - A*w(e) on every edge, summed
 * around any loop, gives sum(a)/sum(w) <= A/B.
 */
export function maxCycleRatio(
  g: IndexedGraph,
  weight: IntegerWeights,
  loops: LoopStructure = loopStructure(g),
): CycleRatio | null {
  if (loops.cyclic.length === 0) return null;
  // Every intermediate value is at most 3 * sum(weights) * sum(delays) over the loops' part;
  // plain numbers are exact while that stays below 2^53 (checked with a margin).
  let big = !(weight instanceof Float64Array);
  if (!big) {
    let sumA = 0;
    let sumB = 0;
    for (const nodes of loops.cyclic) for (const u of nodes) sumA += (weight as Float64Array)[u];
    for (let e = 0; e < g.edgeCount; e++) {
      if (loops.comp[g.edgeFrom[e]] === loops.comp[g.edgeTo[e]]) sumB += g.edgeDelays[e];
    }
    big = 3 * (sumA + 1) * (sumB + 1) >= 2 ** 50;
  }
  const a: Int = !big ? weight : weight instanceof Float64Array ? Array.from(weight, (x) => BigInt(x)) : weight;
  const b: Int = big ? Array.from(g.edgeDelays, (x) => BigInt(x)) : g.edgeDelays;
  const zero = big ? 0n : 0;

  const work: HowardWork = {
    policy: new Int32Array(g.nodeCount).fill(-1),
    level: new Int32Array(g.nodeCount).fill(-1),
    reached: new Uint8Array(g.nodeCount),
    queue: new Int32Array(g.nodeCount),
    x: big ? new Array<bigint>(g.nodeCount).fill(0n) : new Float64Array(g.nodeCount),
  };
  let best: { A: Int; B: Int; loop: number[] } | null = null;
  for (const nodes of loops.cyclic) {
    const r = howard(g, loops, nodes, a, b, zero, work);
    // Same number type on both sides; the products stay exact under the bound above.
    if (!best || r.A * best.B > best.A * r.B) best = { A: r.A, B: r.B, loop: walkPolicy(g, work.policy, r.node) };
  }
  const ratio = reduce(BigInt(best!.A), BigInt(best!.B));
  return { num: ratio.num, den: ratio.den, loop: rotateToFirst(best!.loop) };
}

interface HowardWork {
  policy: Int32Array;
  level: Int32Array;
  reached: Uint8Array;
  queue: Int32Array;
  x: Float64Array | bigint[];
}

function walkPolicy(g: IndexedGraph, policy: Int32Array, start: number): number[] {
  const loop = [start];
  for (let v = g.edgeTo[policy[start]]; v !== start; v = g.edgeTo[policy[v]]) loop.push(v);
  return loop;
}

function rotateToFirst(loop: number[]): number[] {
  let k = 0;
  for (let i = 1; i < loop.length; i++) if (loop[i] < loop[k]) k = i;
  return loop.slice(k).concat(loop.slice(0, k));
}

function howard(
  g: IndexedGraph,
  loops: LoopStructure,
  nodes: number[],
  a: Int,
  b: Int,
  zero: Int,
  work: HowardWork,
): { A: Int; B: Int; node: number } {
  const { comp, inStart, inEdge } = loops;
  const one = typeof zero === 'bigint' ? 1n : 1;
  const { policy, level, reached, queue } = work;
  const x: Int = work.x;
  const c = comp[nodes[0]];
  // Start from the edge with fewest delays: all edges leaving a node share its weight.
  for (const u of nodes) {
    let chosen = -1;
    for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) {
      const e = g.outEdge[k];
      if (comp[g.edgeTo[e]] !== c) continue;
      if (chosen < 0 || g.edgeDelays[e] < g.edgeDelays[chosen]) chosen = e;
    }
    policy[u] = chosen;
  }
  for (;;) {
    // Best loop of the policy graph (each node has one successor: a functional graph).
    for (const u of nodes) level[u] = -1;
    let A: Int = zero;
    let B: Int = zero;
    let bestNode = -1;
    let walk = 0;
    for (const s of nodes) {
      if (level[s] >= 0) continue;
      let v = s;
      while (level[v] < 0) {
        level[v] = walk;
        v = g.edgeTo[policy[v]];
      }
      if (level[v] === walk) {
        let sa: Int = zero;
        let sb: Int = zero;
        let y = v;
        do {
          const e = policy[y];
          sa += a[y];
          sb += b[e];
          y = g.edgeTo[e];
        } while (y !== v);
        if (sb === zero) throw new Error('a loop without delays (validate the design first)');
        if (bestNode < 0 || sa * B > A * sb) {
          A = sa;
          B = sb;
          bestNode = v;
        }
      }
      walk++;
    }
    const d = gcdAny(A, B, zero);
    if (d !== zero && d !== one) {
      A /= d;
      B /= d;
    }
    // Potentials: reverse BFS along policy edges from the best loop, then attach the nodes
    // whose policy leads elsewhere through any edge into the reached part.
    for (const u of nodes) reached[u] = 0;
    let front = 0;
    let back = 0;
    queue[back++] = bestNode;
    reached[bestNode] = 1;
    x[bestNode] = zero;
    while (front < back) {
      const v = queue[front++];
      for (let k = inStart[v]; k < inStart[v + 1]; k++) {
        const e = inEdge[k];
        const u = g.edgeFrom[e];
        if (reached[u] || policy[u] !== e) continue;
        reached[u] = 1;
        x[u] = x[v] + a[u] * B - A * b[e];
        queue[back++] = u;
      }
    }
    front = 0;
    while (back < nodes.length && front < back) {
      const v = queue[front++];
      for (let k = inStart[v]; k < inStart[v + 1]; k++) {
        const e = inEdge[k];
        const u = g.edgeFrom[e];
        if (reached[u] || comp[u] !== c) continue;
        reached[u] = 1;
        policy[u] = e;
        x[u] = x[v] + a[u] * B - A * b[e];
        queue[back++] = u;
      }
    }
    // Improvement; a pass without change certifies the ratio exactly.
    let improved = false;
    for (const u of nodes) {
      for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) {
        const e = g.outEdge[k];
        const v = g.edgeTo[e];
        if (comp[v] !== c) continue;
        const candidate = x[v] + a[u] * B - A * b[e];
        if (candidate > x[u]) {
          x[u] = candidate;
          policy[u] = e;
          improved = true;
        }
      }
    }
    if (!improved) return { A, B, node: bestNode };
  }
}

function gcdAny(p: Int, q: Int, zero: Int): Int {
  if (p < zero) p = -p;
  if (q < zero) q = -q;
  while (q !== zero) {
    const t = p % q;
    p = q;
    q = t;
  }
  return p;
}

/** The iteration bound with its critical loop; null for a DFG without loops. */
export function iterationBound(design: Design, g: IndexedGraph, loops: LoopStructure = loopStructure(g)): IterationBound | null {
  if (loops.cyclic.length === 0) return null;
  const { weights, scale } = scaledNodeTimes(design, g);
  const r = maxCycleRatio(g, weights, loops)!;
  const D = scale;
  const exact = reduce(r.num, r.den * D);
  return {
    value: Number(exact.num) / Number(exact.den),
    numerator: Number(exact.num),
    denominator: Number(exact.den),
    loop: r.loop.map((i) => g.nodeIds[i]),
  };
}

/**
 * No folding onto these units can have N below max over loops of ceil(stages / delays): the
 * maximum cycle ratio with stages as node weights, rounded up; 1 without loops or stages.
 */
export function factorLowerBound(g: IndexedGraph, loops: LoopStructure = loopStructure(g)): number {
  const r = maxCycleRatio(g, g.stages, loops);
  if (!r) return 1;
  const bound = Number(ceilDiv(r.num, r.den));
  return Math.max(1, bound);
}
