// Direct evaluation of the unfolded DFG, iteration by iteration (the synchronous data-flow
// reading of a DFG). Convention: zero initial state: every value before iteration 0 is zero.
import { evalNode, type Arithmetic, type Coefficient } from './arith';
import { bucket, stronglyConnected } from '../graphAlgorithms';
import { NODE_OPS, nodeOp, UNARY_OPS } from '../design/operations';
import type { Design, Diagnostic, NodeOp } from '../types';

// The one resolver of a node's operation is the design stage's; re-exported for the hardware modules.
export { nodeOp };

/** The arithmetic of one node, with its operand edges in port order. */
export interface NodeArithmetic {
  id: string;
  kind: 'input' | 'output' | 'op';
  op: NodeOp | null;
  /** The number, or its exact decimal text when the file gives more digits than a double keeps. */
  coefficient: Coefficient | null;
  /** Indices into design.edges of the edges entering the node, in operand order. */
  operands: number[];
}

export interface ResolvedGraph {
  nodes: NodeArithmetic[];
  index: Map<string, number>;
  /** Node indices in an order where every zero-delay edge goes forward. */
  order: number[];
}

/**
 * Operand order of a node: edges with an explicit `port` take that position; edges without one
 * fill the lowest free positions in file order. Ties (two edges naming one port) keep file order.
 */
export function operandOrder(design: Design, edgeIdx: number[]): number[] {
  const taken = new Set<number>();
  for (const i of edgeIdx) if (design.edges[i].port !== undefined) taken.add(design.edges[i].port!);
  let next = 0;
  const keyed = edgeIdx.map((i, pos) => {
    let key = design.edges[i].port;
    if (key === undefined) {
      while (taken.has(next)) next++;
      key = next++;
    }
    return { i, key, pos };
  });
  keyed.sort((a, b) => a.key - b.key || a.pos - b.pos);
  return keyed.map((k) => k.i);
}

function diag(code: string, message: string, path: (string | number)[]): Diagnostic {
  return { severity: 'error', code, message, line: null, column: null, path };
}

/**
 * Resolves the arithmetic of every node (docs/format.md: `op`, else the kind when it names an
 * operation, `gain` for a one-input `mul` with a coefficient) and checks that it can be
 * evaluated: operand counts, coefficients, one edge into each output, no delay-free loop.
 */
export function resolveArithmetic(design: Design): { graph: ResolvedGraph | null; diagnostics: Diagnostic[] } {
  const diagnostics: Diagnostic[] = [];
  const index = new Map<string, number>();
  design.nodes.forEach((n, i) => index.set(n.id, i));
  const incoming: number[][] = design.nodes.map(() => []);
  design.edges.forEach((e, i) => {
    const t = index.get(e.to);
    if (t === undefined || !index.has(e.from)) {
      diagnostics.push(diag('sim-unknown-node', `edge ${e.from} -> ${e.to} names an unknown node`, ['edges', i]));
      return;
    }
    incoming[t].push(i);
  });
  const nodes: NodeArithmetic[] = design.nodes.map((n, i) => {
    const operands = operandOrder(design, incoming[i]);
    if (n.kind === 'input') {
      if (operands.length > 0) {
        diagnostics.push(diag('sim-input-has-operands', `input ${n.id} is fed by an edge; inputs take their samples from outside`, ['nodes', i]));
      }
      return { id: n.id, kind: 'input', op: null, coefficient: null, operands: [] };
    }
    if (n.kind === 'output') {
      if (operands.length > 1) {
        diagnostics.push(diag('sim-output-fan-in', `output ${n.id} is fed by ${operands.length} edges; an output takes exactly one`, ['nodes', i]));
      }
      return { id: n.id, kind: 'output', op: null, coefficient: null, operands };
    }
    const coefficient: Coefficient | null = n.coefficientText ?? n.coefficient ?? null;
    const op = nodeOp(n, operands.length);
    if (op === null) {
      diagnostics.push(
        diag('sim-no-arithmetic', `node ${n.id} of kind ${n.kind} has no arithmetic: give it an op (${NODE_OPS.join(', ')}) to simulate it or generate RTL`, ['nodes', i]),
      );
    } else if (operands.length === 0) {
      diagnostics.push(diag('sim-no-operands', `operation ${n.id} has no incoming edge, so it has nothing to compute`, ['nodes', i]));
    } else if (UNARY_OPS.has(op) && operands.length !== 1) {
      diagnostics.push(diag('sim-arity', `${op} node ${n.id} takes one operand but ${operands.length} edges feed it`, ['nodes', i]));
    } else if (op === 'gain' && coefficient === null) {
      diagnostics.push(diag('sim-no-coefficient', `gain node ${n.id} needs a coefficient`, ['nodes', i]));
    }
    return { id: n.id, kind: 'op', op, coefficient: op === 'gain' || op === 'mul' ? coefficient : null, operands };
  });

  // Order by zero-delay edges: their strongly connected components come in reverse topological
  // order; a component of two or more nodes, or a node feeding itself, is a delay-free loop.
  const zeroFrom: number[] = [];
  const zeroTo: number[] = [];
  for (const e of design.edges) {
    if (e.delays !== 0) continue;
    const f = index.get(e.from);
    const t = index.get(e.to);
    if (f === undefined || t === undefined) continue;
    zeroFrom.push(f);
    zeroTo.push(t);
  }
  const { start, items } = bucket(nodes.length, Int32Array.from(zeroFrom));
  const { comp, count } = stronglyConnected(nodes.length, start, items, Int32Array.from(zeroTo));
  const size = new Int32Array(count);
  for (let v = 0; v < nodes.length; v++) size[comp[v]]++;
  const onLoop = new Uint8Array(count);
  for (let c = 0; c < count; c++) if (size[c] > 1) onLoop[c] = 1;
  zeroFrom.forEach((f, k) => f === zeroTo[k] && (onLoop[comp[f]] = 1));
  const order = nodes.map((_, i) => i).sort((a, b) => comp[b] - comp[a] || a - b);
  const stuck = nodes.filter((_, i) => onLoop[comp[i]]).map((n) => n.id);
  if (stuck.length) {
    diagnostics.push(diag('sim-delay-free-loop', `a loop without delays runs through ${stuck.slice(0, 5).join(', ')}: it cannot be evaluated`, ['edges']));
  }
  return { graph: diagnostics.length ? null : { nodes, index, order }, diagnostics };
}

export interface ReferenceRun<T> {
  /** Samples 0..completed-1 of every output, by node id. */
  outputs: Record<string, T[]>;
  /** Iterations evaluated: fewer than asked when `tooBig` stopped the run. */
  completed: number;
  /** The node whose value grew past the guard, when the run stopped early. */
  stoppedAt?: { node: string; iteration: number };
}

/**
 * Evaluates the unfolded DFG for `iterations` iterations. Input n of each input node is
 * inputs[id][n] (zero when the stream is shorter); an edge with w delays reads its source's value
 * of iteration n - w, which is zero before iteration 0.
 */
export function evaluateReference<T>(
  design: Design,
  graph: ResolvedGraph,
  ar: Arithmetic<T>,
  inputs: Record<string, T[]>,
  iterations: number,
  tooBig?: (value: T) => boolean,
  /** Sees every node's value of every iteration (node index of design.nodes). */
  observe?: (node: number, iteration: number, value: T) => void,
): ReferenceRun<T> {
  const n = graph.nodes.length;
  const hist: T[][] = graph.nodes.map(() => new Array<T>(iterations));
  const src = design.edges.map((e) => graph.index.get(e.from)!);
  const operandBuf: T[] = [];
  for (let it = 0; it < iterations; it++) {
    for (const v of graph.order) {
      const node = graph.nodes[v];
      let value: T;
      if (node.kind === 'input') {
        const s = inputs[node.id];
        value = s && it < s.length ? s[it] : ar.zero;
      } else {
        operandBuf.length = 0;
        for (const ei of node.operands) {
          const back = it - design.edges[ei].delays;
          operandBuf.push(back >= 0 ? hist[src[ei]][back] : ar.zero);
        }
        if (node.kind === 'output') value = operandBuf.length ? (ar.output ? ar.output(node.id, operandBuf[0], it) : operandBuf[0]) : ar.zero;
        else value = evalNode(ar, node.id, node.op!, operandBuf, node.coefficient, it);
      }
      if (tooBig && tooBig(value)) {
        const outputs: Record<string, T[]> = {};
        for (let u = 0; u < n; u++) if (graph.nodes[u].kind === 'output') outputs[graph.nodes[u].id] = hist[u].slice(0, it);
        return { outputs, completed: it, stoppedAt: { node: node.id, iteration: it } };
      }
      hist[v][it] = value;
      if (observe) observe(v, it, value);
    }
  }
  const outputs: Record<string, T[]> = {};
  for (let v = 0; v < n; v++) if (graph.nodes[v].kind === 'output') outputs[graph.nodes[v].id] = hist[v];
  return { outputs, completed: iterations };
}
