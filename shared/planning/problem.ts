// Method: the scheduling-and-binding problem of folding (docs/planning.md): operations per kind, unit
// slots, pins, and the edges as difference constraints on start times T = slot + N * retiming (modulo scheduling with II = N).
// Convention: inputs share one boundary variable, outputs one (the same with fixed latency), as in docs/engine.md.
import type { Design, Unit } from '../types';
import { operandOrder } from '../reference';

export const OP = 0;
export const IN = 1;
export const OUT = 2;

/**
 * One constraint T(b) >= T(a) + base + (stages ? P(a) : 0) between schedule nodes: operations
 * 0..n-1, then the inputs' boundary node n and the outputs' boundary node (n + 1, or n again
 * with fixed latency). Boundary nodes have T = N * r, a multiple of N.
 */
export interface Arc {
  a: number;
  b: number;
  base: number;
  stages: boolean;
  /** The DFG edge it comes from. */
  edge: number;
}

export interface PlanProblem {
  design: Design;
  N: number;
  latency: 'free' | 'fixed';
  units: Unit[];
  unitIndex: Map<string, number>;
  unitStages: Int32Array;
  /** Unit indexes of each kind, in the order given. */
  kindUnits: Map<string, number[]>;
  kinds: string[];
  /** Node ids, roles and boundary slots (-1: held input or tap output), in file order. */
  nodeIds: string[];
  nodeIndex: Map<string, number>;
  role: Uint8Array;
  boundarySlot: Int32Array;
  /** Node index of each operation (file order) and operation index of each node (-1 for boundary nodes). */
  ops: Int32Array;
  opOf: Int32Array;
  opKind: string[];
  /** Pin of each operation: unit index and slot, or -1. */
  pinUnit: Int32Array;
  pinSlot: Int32Array;
  pins: string[];
  /** Entries of the design's sets that could not be kept (unit not planned on, or slot >= N). */
  droppedPins: string[];
  /** DFG edges. */
  edgeFrom: Int32Array;
  edgeTo: Int32Array;
  edgeDelays: Int32Array;
  /** Operand position of each edge at its consumer (the order of shared/reference.ts). */
  edgePort: Int32Array;
  /** Schedule nodes: ops, then the boundary node(s). */
  scheduleNodes: number;
  inNode: number;
  outNode: number;
  arcs: Arc[];
  hasInputs: boolean;
  hasOutputs: boolean;
}

/**
 * Extracts the problem. `units` replaces the design's units (the CLI may add or drop some);
 * entries of the design's sets on units of the list, at slots below N, are pins.
 */
export function buildProblem(design: Design, factor: number, units: Unit[]): PlanProblem {
  const N = factor;
  const latency = design.folding.latency === 'fixed' ? 'fixed' : 'free';
  const unitIndex = new Map<string, number>();
  const unitStages = new Int32Array(units.length);
  const kindUnits = new Map<string, number[]>();
  units.forEach((u, k) => {
    unitIndex.set(u.id, k);
    unitStages[k] = u.stages;
    if (!kindUnits.has(u.kind)) kindUnits.set(u.kind, []);
    kindUnits.get(u.kind)!.push(k);
  });
  const nN = design.nodes.length;
  const nodeIds = design.nodes.map((n) => n.id);
  const nodeIndex = new Map<string, number>();
  nodeIds.forEach((id, i) => nodeIndex.set(id, i));
  const role = new Uint8Array(nN);
  const boundarySlot = new Int32Array(nN).fill(-1);
  const opOf = new Int32Array(nN).fill(-1);
  const opList: number[] = [];
  const opKind: string[] = [];
  let hasInputs = false;
  let hasOutputs = false;
  design.nodes.forEach((n, i) => {
    if (n.kind === 'input' || n.kind === 'output') {
      role[i] = n.kind === 'input' ? IN : OUT;
      if (n.kind === 'input') hasInputs = true;
      else hasOutputs = true;
      if (n.slot !== undefined && n.slot !== null) boundarySlot[i] = n.slot;
    } else {
      role[i] = OP;
      opOf[i] = opList.length;
      opList.push(i);
      opKind.push(n.kind);
    }
  });
  const n = opList.length;
  const pinUnit = new Int32Array(n).fill(-1);
  const pinSlot = new Int32Array(n).fill(-1);
  const pins: string[] = [];
  const droppedPins: string[] = [];
  for (const key of Object.keys(design.folding.sets)) {
    const list = design.folding.sets[key] ?? [];
    const k = unitIndex.get(key);
    for (let p = 0; p < list.length; p++) {
      const id = list[p];
      if (id === null || id === undefined) continue;
      const i = nodeIndex.get(id);
      if (i === undefined || opOf[i] < 0) continue;
      const o = opOf[i];
      if (k === undefined || p >= N || units[k].kind !== opKind[o]) {
        droppedPins.push(id);
        continue;
      }
      pinUnit[o] = k;
      pinSlot[o] = p;
      pins.push(id);
    }
  }

  const m = design.edges.length;
  const edgeFrom = new Int32Array(m);
  const edgeTo = new Int32Array(m);
  const edgeDelays = new Int32Array(m);
  const edgePort = new Int32Array(m);
  const incoming: number[][] = design.nodes.map(() => []);
  for (let e = 0; e < m; e++) {
    const edge = design.edges[e];
    edgeFrom[e] = nodeIndex.get(edge.from)!;
    edgeTo[e] = nodeIndex.get(edge.to)!;
    edgeDelays[e] = edge.delays ?? 0;
    incoming[edgeTo[e]].push(e);
  }
  for (let v = 0; v < nN; v++) {
    const order = operandOrder(design, incoming[v]);
    order.forEach((e, p) => (edgePort[e] = p));
  }

  const inNode = n;
  const outNode = latency === 'fixed' ? n : n + 1;
  const scheduleNodes = latency === 'fixed' ? n + 1 : n + 2;
  const arcs: Arc[] = [];
  for (let e = 0; e < m; e++) {
    const u = edgeFrom[e];
    const v = edgeTo[e];
    const w = edgeDelays[e];
    const ru = role[u];
    const rv = role[v];
    if (ru === OP && rv === OP) arcs.push({ a: opOf[u], b: opOf[v], base: -N * w, stages: true, edge: e });
    else if (ru === IN && rv === OP) {
      const s = boundarySlot[u];
      arcs.push({ a: inNode, b: opOf[v], base: (s >= 0 ? s : 0) - N * w, stages: false, edge: e });
    } else if (ru === OP && rv === OUT) {
      const s = boundarySlot[v];
      if (s >= 0) arcs.push({ a: opOf[u], b: outNode, base: -N * w - s, stages: true, edge: e });
      // a tap: r(U) - r(out) <= w, i.e. T(U) <= T(out) + N w + N - 1
      else arcs.push({ a: opOf[u], b: outNode, base: -N * w - N + 1, stages: false, edge: e });
    } else if (ru === IN && rv === OUT) {
      const si = boundarySlot[u];
      const so = boundarySlot[v];
      const base = si >= 0 && so >= 0 ? si - so - N * w : -N * w;
      arcs.push({ a: inNode, b: outNode, base, stages: false, edge: e });
    }
    // edges out of outputs or into inputs are invalid (shared/validate.ts)
  }
  return {
    design,
    N,
    latency,
    units,
    unitIndex,
    unitStages,
    kindUnits,
    kinds: [...new Set(opKind)],
    nodeIds,
    nodeIndex,
    role,
    boundarySlot,
    ops: Int32Array.from(opList),
    opOf,
    opKind,
    pinUnit,
    pinSlot,
    pins,
    droppedPins,
    edgeFrom,
    edgeTo,
    edgeDelays,
    edgePort,
    scheduleNodes,
    inNode,
    outNode,
    arcs,
    hasInputs,
    hasOutputs,
  };
}

/** Operations of each kind. */
export function operationsPerKind(problem: PlanProblem): Map<string, number> {
  const count = new Map<string, number>();
  for (const k of problem.opKind) count.set(k, (count.get(k) ?? 0) + 1);
  return count;
}

/** folding.sets from an assignment (unit index and slot per operation): one list of N entries per unit. */
export function setsFromAssignment(problem: PlanProblem, unitOf: ArrayLike<number>, slotOf: ArrayLike<number>): Record<string, (string | null)[]> {
  const rows = problem.units.map(() => new Array<string | null>(problem.N).fill(null));
  for (let o = 0; o < problem.ops.length; o++) {
    const k = unitOf[o];
    const s = slotOf[o];
    if (k < 0 || s < 0 || s >= problem.N) throw new Error(`operation ${problem.nodeIds[problem.ops[o]]} has no place`);
    if (rows[k][s] !== null) throw new Error(`unit ${problem.units[k].id} runs two operations in partition ${s}`);
    rows[k][s] = problem.nodeIds[problem.ops[o]];
  }
  return Object.fromEntries(problem.units.map((u, k) => [u.id, rows[k]]));
}

/** The design with these units, this factor and these sets (everything else as in the file). */
export function designWithSets(design: Design, factor: number, units: Unit[], sets: Record<string, (string | null)[]>): Design {
  return { ...design, units: units.map((u) => ({ ...u })), folding: { ...design.folding, factor, sets } };
}

/** A Design back in the shape of a design file (keys as format pleat/1 writes them), e.g. for validateDesign. */
export function designDocument(design: Design): Record<string, unknown> {
  const doc: Record<string, unknown> = { format: 'pleat/1', name: design.name };
  if (design.description !== undefined) doc.description = design.description;
  if (design.clockNs !== undefined) doc.clock_ns = design.clockNs;
  if (Object.keys(design.kinds).length) doc.kinds = design.kinds;
  doc.units = design.units;
  doc.nodes = design.nodes;
  doc.edges = design.edges.map((e) => {
    const x: Record<string, unknown> = { from: e.from, to: e.to };
    if (e.delays) x.delays = e.delays;
    if (e.port !== undefined) x.port = e.port;
    return x;
  });
  doc.folding = { factor: design.folding.factor, sets: design.folding.sets, latency: design.folding.latency };
  return doc;
}
