// Random designs for the property tests of simulation and RTL: small DFGs with loops, every
// operation of docs/format.md, held and slotted inputs, slotted outputs and taps, random folding sets.
// Loaded through shared/design/load.ts, so every design here is a valid file of format pleat/1.
import { loadDesign } from '../../shared/design/load';
import { seededRandom } from '../../shared/hardware/arith';
import type { Design } from '../../shared/types';

export interface RandomDesignOptions {
  /** Most operation nodes (default 7). */
  maxOps?: number;
  /** Allow units without pipeline stages (combinational units). Default true. */
  zeroStages?: boolean;
}

const COEFFICIENTS = [-0.5, 0.25, 0.75, -1.25, 0.1, 2, -0.875, 1.5];

export interface RandomDesign {
  design: Design;
  /** The file text (JSON is YAML), for a failure message. */
  text: string;
}

export function randomDesign(seed: number, opts: RandomDesignOptions = {}): RandomDesign {
  const rnd = seededRandom(seed);
  const int = (lo: number, hi: number) => lo + Math.floor(rnd() * (hi - lo + 1));
  const pick = <T,>(xs: T[]): T => xs[Math.floor(rnd() * xs.length)];
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
