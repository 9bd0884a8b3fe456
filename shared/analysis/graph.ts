// Method: the DFG indexed by node and edge with the Notation's slot and stages (SCCs: shared/graphAlgorithms.ts)
// and Bellman-Ford with subtree disassembly (Tarjan 1981). Convention: held inputs/taps have no slot.
import type { Design } from '../types';
import { bucket, stronglyConnected } from '../graphAlgorithms';

/** Role of a node. */
export const OPERATION = 0;
export const INPUT = 1;
export const OUTPUT = 2;

/** Marks "no slot" (held input, output read as a tap) in `slot`. */
export const NO_SLOT = -1;

/**
 * A validated design in arrays indexed by node and edge number. Nodes and edges keep the order
 * of the design file, so edge k here is edge k of the file.
 */
export interface IndexedGraph {
  /** Folding factor N. */
  factor: number;
  nodeCount: number;
  edgeCount: number;
  nodeIds: string[];
  nodeIndex: Map<string, number>;
  /** OPERATION, INPUT or OUTPUT. */
  role: Uint8Array;
  /** Time partition of each node, NO_SLOT for a held input or an output without slot. */
  slot: Float64Array;
  /** Pipeline stages of what executes the node (0 for boundary nodes). */
  stages: Float64Array;
  /** Unit index executing each operation, -1 for boundary nodes. */
  unitOf: Int32Array;
  unitIds: string[];
  unitKinds: string[];
  unitStages: Float64Array;
  /** Operations placed on each unit. */
  unitOperations: Int32Array;
  edgeFrom: Int32Array;
  edgeTo: Int32Array;
  edgeDelays: Float64Array;
  /** Outgoing edges of node u: outEdge[outStart[u] .. outStart[u+1]). */
  outStart: Int32Array;
  outEdge: Int32Array;
}

/**
 * Indexes a design. The design must be valid (shared/design/validate.ts): unknown ids or an operation
 * outside every set are contract violations and throw.
 */
export function buildGraph(design: Design): IndexedGraph {
  const factor = design.folding.factor;
  const n = design.nodes.length;
  const m = design.edges.length;
  const nodeIds = new Array<string>(n);
  const nodeIndex = new Map<string, number>();
  const role = new Uint8Array(n);
  const slot = new Float64Array(n).fill(NO_SLOT);
  const stages = new Float64Array(n);
  const unitOf = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) {
    const node = design.nodes[i];
    nodeIds[i] = node.id;
    nodeIndex.set(node.id, i);
    if (node.kind === 'input' || node.kind === 'output') {
      role[i] = node.kind === 'input' ? INPUT : OUTPUT;
      if (node.slot !== undefined && node.slot !== null) slot[i] = node.slot;
    }
  }

  const u = design.units.length;
  const unitIds = new Array<string>(u);
  const unitKinds = new Array<string>(u);
  const unitStages = new Float64Array(u);
  const unitOperations = new Int32Array(u);
  for (let k = 0; k < u; k++) {
    const unit = design.units[k];
    unitIds[k] = unit.id;
    unitKinds[k] = unit.kind;
    unitStages[k] = unit.stages;
    const set = design.folding.sets[unit.id] ?? [];
    for (let p = 0; p < set.length; p++) {
      const id = set[p];
      if (id === null || id === undefined) continue;
      const i = nodeIndex.get(id);
      if (i === undefined) throw new Error(`folding set of ${unit.id} names unknown node ${id}`);
      slot[i] = p;
      stages[i] = unit.stages;
      unitOf[i] = k;
      unitOperations[k]++;
    }
  }
  for (let i = 0; i < n; i++) {
    if (role[i] === OPERATION && unitOf[i] < 0) {
      throw new Error(`operation ${nodeIds[i]} is in no folding set (validate the design first)`);
    }
  }

  const edgeFrom = new Int32Array(m);
  const edgeTo = new Int32Array(m);
  const edgeDelays = new Float64Array(m);
  for (let e = 0; e < m; e++) {
    const edge = design.edges[e];
    const a = nodeIndex.get(edge.from);
    const b = nodeIndex.get(edge.to);
    if (a === undefined || b === undefined) {
      throw new Error(`edge ${edge.from} -> ${edge.to} names an unknown node (validate the design first)`);
    }
    edgeFrom[e] = a;
    edgeTo[e] = b;
    edgeDelays[e] = edge.delays ?? 0;
  }
  const { start: outStart, items: outEdge } = bucket(n, edgeFrom);

  return {
    factor,
    nodeCount: n,
    edgeCount: m,
    nodeIds,
    nodeIndex,
    role,
    slot,
    stages,
    unitOf,
    unitIds,
    unitKinds,
    unitStages,
    unitOperations,
    edgeFrom,
    edgeTo,
    edgeDelays,
    outStart,
    outEdge,
  };
}

// bucket and stronglyConnected live in shared/graphAlgorithms.ts (the design stage uses them too);
// re-exported here for the analysis modules.
export { bucket, stronglyConnected };

/** Weights of a constraint graph: plain numbers (exact below 2^53) or bigints. */
export type Weights = ArrayLike<number> | readonly bigint[];

export interface ShortestPaths {
  /** Distance of every vertex from the virtual source (<= 0); null when a negative cycle exists. */
  dist: Float64Array | bigint[] | null;
  /** Arcs of a negative cycle in order (arc k ends where arc k+1 starts), or null. */
  cycle: number[] | null;
}

/**
 * Single-source shortest paths from a virtual source joined to every vertex by a 0-weight arc
 * (the standard solution of a system of difference constraints). Bellman-Ford with a FIFO
 * queue and Tarjan's subtree disassembly (Cherkassky & Goldberg's BFCT): relaxing an arc into
 * the subtree of the shortest-path tree that contains its tail is a negative cycle, found as
 * soon as it forms; in practice near-linear. Weights may be numbers or bigints (not mixed).
 */
export function shortestPathsFromAll(
  n: number,
  arcFrom: Int32Array,
  arcTo: Int32Array,
  weight: Weights,
): ShortestPaths {
  const big = weight.length > 0 && typeof weight[0] === 'bigint';
  // One code path for both number types: + and < read the same on two bigints as on two numbers.
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  const w = weight as any;
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  const dist: any = big ? new Array<bigint>(n).fill(0n) : new Float64Array(n);
  const { start, items } = bucket(n, arcFrom);
  const root = n;
  // Shortest-path tree as a preorder doubly linked list over vertices 0..n (n = virtual source).
  const next = new Int32Array(n + 1);
  const prev = new Int32Array(n + 1);
  const depth = new Int32Array(n + 1);
  const parentArc = new Int32Array(n).fill(-1);
  const inTree = new Uint8Array(n + 1).fill(1);
  for (let v = 0; v <= n; v++) {
    next[v] = v === root ? (n > 0 ? 0 : -1) : v + 1 < n ? v + 1 : -1;
    prev[v] = v === root ? -1 : v === 0 ? root : v - 1;
    depth[v] = v === root ? 0 : 1;
  }
  const queue = new Int32Array(n + 1);
  const inQueue = new Uint8Array(n).fill(1);
  let head = 0;
  let size = n;
  for (let v = 0; v < n; v++) queue[v] = v;
  const cap = n + 1;

  while (size > 0) {
    const u = queue[head];
    head = head + 1 === cap ? 0 : head + 1;
    size--;
    inQueue[u] = 0;
    if (!inTree[u]) continue; // its label is stale: an ancestor improved, it will be relabelled
    for (let k = start[u], end = start[u + 1]; k < end; k++) {
      const a = items[k];
      const v = arcTo[a];
      const candidate = dist[u] + w[a];
      if (!(candidate < dist[v])) continue;
      if (v === u) return { dist: null, cycle: [a] };
      // Take v's subtree out of the tree; meeting u there closes a negative cycle.
      if (inTree[v]) {
        const dv = depth[v];
        let x = next[v];
        while (x !== -1 && depth[x] > dv) {
          if (x === u) return { dist: null, cycle: treePath(v, u, parentArc, arcFrom, a) };
          inTree[x] = 0;
          x = next[x];
        }
        const before = prev[v];
        next[before] = x;
        if (x !== -1) prev[x] = before;
      }
      dist[v] = candidate;
      parentArc[v] = a;
      depth[v] = depth[u] + 1;
      inTree[v] = 1;
      const after = next[u];
      next[u] = v;
      prev[v] = u;
      next[v] = after;
      if (after !== -1) prev[after] = v;
      if (!inQueue[v]) {
        inQueue[v] = 1;
        let tail = head + size;
        if (tail >= cap) tail -= cap;
        queue[tail] = v;
        size++;
      }
    }
  }
  return { dist, cycle: null };
}

/** Arcs of the tree path v -> ... -> u followed by the closing arc u -> v. */
function treePath(v: number, u: number, parentArc: Int32Array, arcFrom: Int32Array, closing: number): number[] {
  const path: number[] = [];
  for (let x = u; x !== v; ) {
    const a = parentArc[x];
    path.push(a);
    x = arcFrom[a];
  }
  path.reverse();
  path.push(closing);
  return path;
}
