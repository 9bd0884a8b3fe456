// The one random-design generator of the tests, in two profiles: "structure" (randomDesign: any
// DFG the analysis takes, built in memory) and "evaluable" (randomDesignFile: a valid pleat/1 file
// that simulation and RTL can run). Every design is rebuilt from its seed.
import { loadDesign } from '../../shared/design/load';
import type { Design, DfgNode } from '../../shared/types';
import { makeDesign, rng, shuffle } from './designs';

/** The draws both profiles make, from one seeded PRNG (mulberry32, shared/hardware/arith.ts). */
function draw(seed: number) {
  const r = rng(seed);
  const int = (lo: number, hi: number) => lo + Math.floor(r() * (hi - lo + 1));
  const pick = <T,>(xs: readonly T[]): T => xs[Math.floor(r() * xs.length)];
  return { r, int, pick };
}

export interface StructureOptions {
  minOps?: number;
  maxOps?: number;
  maxStages?: number;
  maxDelays?: number;
  /** Chance that an edge between two operations goes backwards (making loops). */
  loopiness?: number;
  /** Extra idle partitions added to N beyond the largest set. */
  maxSlack?: number;
  /** Give some nodes and kinds a decimal `time`. */
  times?: boolean;
}

/** Exact fractions of the decimal times the generator may use, written by hand: [text, num, den]. */
export const DECIMAL_TIMES: [number, bigint, bigint][] = [
  [0.5, 1n, 2n],
  [1, 1n, 1n],
  [1.25, 5n, 4n],
  [2.5, 5n, 2n],
  [0.1, 1n, 10n],
  [3, 3n, 1n],
  [0.75, 3n, 4n],
];

/**
 * Profile "structure": a random DFG built in memory for the analysis (kinds add, mul and mac with
 * any number of inputs, decimal times, loops through delays). It passes the validation rules of docs/format.md: every operation in exactly
 * one set of a unit of its kind, sets no longer than N, slots inside 0..N-1, every loop with at
 * least one delay (delay-free edges only go forward in a random order of the operations).
 */
export function randomDesign(seed: number, options: StructureOptions = {}): Design {
  const { r, int, pick } = draw(seed);
  const minOps = options.minOps ?? 2;
  const maxOps = options.maxOps ?? 8;
  const maxStages = options.maxStages ?? 3;
  const maxDelays = options.maxDelays ?? 3;
  const loopiness = options.loopiness ?? 0.35;

  const kinds = ['add', 'mul', 'mac'].slice(0, int(1, 3));
  const units: [string, string, number][] = [];
  for (const kind of kinds) {
    const count = int(1, 2);
    for (let k = 0; k < count; k++) units.push([`${kind.toUpperCase()}${k}`, kind, int(0, maxStages)]);
  }
  const nOps = int(minOps, maxOps);
  const ops: { id: string; kind: string; unit: string; time?: number }[] = [];
  for (let i = 0; i < nOps; i++) {
    const kind = pick(kinds);
    const unit = pick(units.filter((u) => u[1] === kind))[0];
    const op: (typeof ops)[number] = { id: `n${i}`, kind, unit };
    if (options.times && r() < 0.3) op.time = pick(DECIMAL_TIMES)[0];
    ops.push(op);
  }
  const perUnit = new Map<string, string[]>();
  for (const u of units) perUnit.set(u[0], []);
  for (const op of ops) perUnit.get(op.unit)!.push(op.id);
  const largest = Math.max(1, ...[...perUnit.values()].map((l) => l.length));
  const N = largest + int(0, options.maxSlack ?? 2);

  const sets: Record<string, (string | null)[]> = {};
  for (const [unit, list] of perUnit) {
    const positions = shuffle(Array.from({ length: N }, (_, p) => p), r).slice(0, list.length);
    const length = list.length === 0 ? int(0, N) : Math.max(...positions) + 1 + int(0, N - 1 - Math.max(...positions));
    const set = new Array<string | null>(length).fill(null);
    list.forEach((id, i) => (set[positions[i]] = id));
    sets[unit] = set;
  }

  const nodes: DfgNode[] = [];
  const nIn = int(0, 2);
  const nOut = int(0, 2);
  for (let i = 0; i < nIn; i++) nodes.push({ id: `in${i}`, kind: 'input', ...(r() < 0.5 ? { slot: int(0, N - 1) } : {}) });
  for (const op of ops) nodes.push({ id: op.id, kind: op.kind, ...(op.time !== undefined ? { time: op.time } : {}) });
  for (let i = 0; i < nOut; i++) nodes.push({ id: `out${i}`, kind: 'output', ...(r() < 0.5 ? { slot: int(0, N - 1) } : {}) });

  // A random order of the operations: delay-free edges only go forward in it.
  const order = shuffle(ops.map((o) => o.id), r);
  const edges: [string, string, number][] = [];
  const nEdges = int(nOps, nOps * 2 + 1);
  for (let k = 0; k < nEdges; k++) {
    const i = int(0, nOps - 1);
    const j = int(0, nOps - 1);
    if (i < j) edges.push([order[i], order[j], r() < 0.6 ? 0 : int(1, maxDelays)]);
    else if (r() < loopiness || i === j) edges.push([order[i], order[j], int(1, maxDelays)]);
    else edges.push([order[j], order[i], r() < 0.6 ? 0 : int(1, maxDelays)]);
  }
  for (let i = 0; i < nIn; i++) edges.push([`in${i}`, pick(order), r() < 0.7 ? 0 : int(1, maxDelays)]);
  for (let i = 0; i < nOut; i++) edges.push([pick(order), `out${i}`, r() < 0.7 ? 0 : int(1, maxDelays)]);

  const kindTimes: Record<string, { time: number }> = {};
  if (options.times) for (const kind of kinds) if (r() < 0.5) kindTimes[kind] = { time: pick(DECIMAL_TIMES)[0] };

  return makeDesign({
    name: `random-${seed}`,
    factor: N,
    latency: r() < 0.3 ? 'fixed' : 'free',
    kinds: kindTimes,
    units,
    nodes,
    edges,
    sets,
  });
}

export interface EvaluableOptions {
  /** Most operation nodes (default 7). */
  maxOps?: number;
  /** Allow units without pipeline stages (combinational units). Default true. */
  zeroStages?: boolean;
}

const COEFFICIENTS = [-0.5, 0.25, 0.75, -1.25, 0.1, 2, -0.875, 1.5];

export interface RandomDesignFile {
  design: Design;
  /** The file text (JSON is YAML), for a failure message. */
  text: string;
}

/**
 * Profile "evaluable": a valid file of format pleat/1 for simulation and RTL, with every operation
 * of docs/format.md, held and slotted inputs, slotted outputs and taps, random folding sets; loaded
 * through shared/design/load.ts, so defaults (op, port order) are exercised too.
 */
export function randomDesignFile(seed: number, opts: EvaluableOptions = {}): RandomDesignFile {
  const { r: rnd, int, pick } = draw(seed);
  const maxOps = opts.maxOps ?? 7;
  const minStages = opts.zeroStages === false ? 1 : 0;

  const nOps = int(2, maxOps);
  const hasMul = rnd() < 0.7;
  const units: { id: string; kind: string; stages: number }[] = [];
  for (let i = 0, n = int(1, 2); i < n; i++) units.push({ id: `ADD${i}`, kind: 'add', stages: int(minStages, 2) });
  if (hasMul) for (let i = 0, n = int(1, 2); i < n; i++) units.push({ id: `MUL${i}`, kind: 'mul', stages: int(minStages, 2) });

  const nodes: Record<string, unknown>[] = [];
  const edges: Record<string, unknown>[] = [];
  const inputs = Array.from({ length: int(1, 2) }, (_, i) => `x${i}`);
  const ops = Array.from({ length: nOps }, (_, i) => `n${i}`);
  const kindOf = new Map<string, string>();

  for (let i = 0; i < nOps; i++) {
    const id = ops[i];
    const roll = rnd();
    let kind = 'add';
    let op: string;
    let arity: number;
    let coefficient: number | undefined;
    if (hasMul && roll < 0.3) {
      kind = 'mul';
      if (rnd() < 0.75) {
        op = 'gain';
        arity = 1;
        coefficient = pick(COEFFICIENTS);
      } else {
        op = 'mul';
        arity = 2;
        if (rnd() < 0.3) coefficient = pick(COEFFICIENTS);
      }
    } else {
      const r2 = rnd();
      if (r2 < 0.45) [op, arity] = ['add', int(2, 3)];
      else if (r2 < 0.75) [op, arity] = ['sub', int(2, 3)];
      else if (r2 < 0.88) [op, arity] = ['neg', 1];
      else [op, arity] = ['pass', 1];
    }
    kindOf.set(id, kind);
    const node: Record<string, unknown> = { id, kind };
    // Half the time leave `op` to its default (the kind, or gain for a one-input mul with a coefficient).
    const implicit = (op === kind && !(kind === 'mul' && arity === 1 && coefficient !== undefined)) || (op === 'gain' && kind === 'mul');
    if (!implicit || rnd() < 0.5) node.op = op;
    if (coefficient !== undefined) node.coefficient = coefficient;
    nodes.push(node);
    const ports = Array.from({ length: arity }, (_, p) => p);
    // Shuffle the order in which the edges are written; ports keep the operand order.
    for (let k = ports.length - 1; k > 0; k--) {
      const j = int(0, k);
      [ports[k], ports[j]] = [ports[j], ports[k]];
    }
    for (const p of ports) {
      const edge: Record<string, unknown> = { to: id };
      // Signal products stay out of loops so exact values do not grow without bound.
      const backOk = op !== 'mul';
      if (backOk && rnd() < 0.3) {
        edge.from = pick(ops.slice(i));
        edge.delays = int(1, 2);
      } else {
        const sources = [...inputs, ...ops.slice(0, i)];
        edge.from = pick(sources);
        const d = int(0, 3) === 0 ? 1 : 0;
        if (d) edge.delays = d;
      }
      // Mostly explicit ports; sometimes none, so the file order decides (docs/format.md's default).
      if (arity > 1 && rnd() < 0.75) edge.port = p;
      edges.push(edge);
    }
  }

  // Folding: each operation on a unit of its kind, at a free position.
  const perUnit = new Map<string, string[]>();
  for (const u of units) perUnit.set(u.id, []);
  for (const id of ops) {
    const u = pick(units.filter((x) => x.kind === kindOf.get(id)));
    perUnit.get(u.id)!.push(id);
  }
  const busiest = Math.max(1, ...[...perUnit.values()].map((l) => l.length));
  const N = busiest + int(0, 2);
  const sets: Record<string, (string | null)[]> = {};
  for (const u of units) {
    const slots: (string | null)[] = new Array(N).fill(null);
    const free = Array.from({ length: N }, (_, t) => t);
    for (const id of perUnit.get(u.id)!) {
      const k = int(0, free.length - 1);
      slots[free[k]] = id;
      free.splice(k, 1);
    }
    // Trailing idle partitions may be left out (a list shorter than N).
    while (slots.length && slots[slots.length - 1] === null && rnd() < 0.5) slots.pop();
    sets[u.id] = slots;
  }

  for (const x of inputs) nodes.unshift(rnd() < 0.5 ? { id: x, kind: 'input', slot: int(0, N - 1) } : { id: x, kind: 'input' });
  const nOut = int(1, 2);
  for (let k = 0; k < nOut; k++) {
    const id = `y${k}`;
    nodes.push(rnd() < 0.5 ? { id, kind: 'output', slot: int(0, N - 1) } : { id, kind: 'output' });
    const edge: Record<string, unknown> = { from: k === 0 ? ops[nOps - 1] : pick(ops), to: id };
    if (rnd() < 0.3) edge.delays = 1;
    edges.push(edge);
  }

  const doc = {
    format: 'pleat/1',
    name: `random-${seed >>> 0}`,
    units,
    nodes,
    edges,
    folding: { factor: N, sets, ...(rnd() < 0.25 ? { latency: 'fixed' } : {}) },
  };
  const text = JSON.stringify(doc, null, 1);
  const { design, diagnostics } = loadDesign(text);
  if (!design) throw new Error(`random design ${seed} is invalid: ${JSON.stringify(diagnostics)}\n${text}`);
  return { design, text };
}
