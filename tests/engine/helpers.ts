// Builds Design objects for engine tests without going through YAML or validation.
import { seededRandom } from '../../shared/hardware/arith';
import type { Design, DfgNode } from '../../shared/types';

export interface DesignSpec {
  name?: string;
  factor: number;
  latency?: 'free' | 'fixed';
  clockNs?: number;
  kinds?: Record<string, { time: number }>;
  /** [id, kind, stages] */
  units: [string, string, number][];
  /** Operation nodes as [id, kind] or full nodes (inputs/outputs included). */
  nodes: ([string, string] | DfgNode)[];
  /** [from, to, delays?] */
  edges: [string, string, number?][];
  sets: Record<string, (string | null)[]>;
}

export function makeDesign(spec: DesignSpec): Design {
  return {
    format: 'pleat/1',
    name: spec.name ?? 'test-design',
    ...(spec.clockNs !== undefined ? { clockNs: spec.clockNs } : {}),
    kinds: spec.kinds ?? {},
    units: spec.units.map(([id, kind, stages]) => ({ id, kind, stages })),
    nodes: spec.nodes.map((n) => (Array.isArray(n) ? { id: n[0], kind: n[1] } : n)),
    edges: spec.edges.map(([from, to, delays]) => ({ from, to, delays: delays ?? 0 })),
    folding: { factor: spec.factor, sets: spec.sets, latency: spec.latency ?? 'free' },
  };
}

/** A variable of lifetime analysis as the tests state it: produced at tIn, last used at tOut. */
export interface TestLifetime {
  variable: string;
  tIn: number;
  tOut: number;
}

/**
 * The instances live during each partition of the periodic steady state, by the rule of
 * docs/analysis.md (not live in the production cycle, live in the last-use cycle), named `X` or
 * `X@j` when the instance entered the registers more than j*N cycles ago.
 */
export function expectedRows(vars: readonly TestLifetime[], N: number): string[][] {
  const rows: string[][] = Array.from({ length: N }, () => []);
  for (const x of vars) {
    for (let e = 1; e <= x.tOut - x.tIn; e++) {
      const j = Math.floor((e - 1) / N);
      rows[(x.tIn + e) % N].push(j === 0 ? x.variable : `${x.variable}@${j}`);
    }
  }
  return rows.map((r) => r.sort());
}

/** Problems with an allocation table, or [] when it is consistent. */
export function allocationProblems(
  alloc: {
    registers: number;
    factor: number;
    cells: (string | null)[][];
    moves: { cycle: number; variable: string; from: number | 'unit'; to: number }[];
  },
  vars: readonly TestLifetime[],
): string[] {
  const problems: string[] = [];
  const N = alloc.factor;
  const K = alloc.registers;
  const expected = expectedRows(vars, N);
  if (alloc.cells.length !== N) problems.push(`expected ${N} rows, got ${alloc.cells.length}`);
  alloc.cells.forEach((row, t) => {
    if (row.length !== K) problems.push(`row ${t} has ${row.length} registers, expected ${K}`);
    const held = row.filter((c): c is string => c !== null).sort();
    if (new Set(held).size !== held.length) problems.push(`row ${t} holds one instance twice: ${held}`);
    if (JSON.stringify(held) !== JSON.stringify(expected[t])) {
      problems.push(`row ${t} holds [${held}] but the live instances are [${expected[t]}]`);
    }
  });
  // Replaying the transfers of partition t must give row t + 1 exactly.
  for (let t = 0; t < N && problems.length === 0; t++) {
    const next = new Array<string | null>(K).fill(null);
    const used = new Set<number>();
    for (const mv of alloc.moves.filter((x) => x.cycle === t)) {
      if (next[mv.to] !== null) problems.push(`partition ${t}: register ${mv.to} loaded twice`);
      next[mv.to] = mv.variable;
      if (mv.from !== 'unit') {
        const src = alloc.cells[t][mv.from];
        if (src === null || src.split('@')[0] !== mv.variable.split('@')[0]) {
          problems.push(`partition ${t}: move of ${mv.variable} from register ${mv.from}, which holds ${src}`);
        }
        if (used.has(mv.from)) problems.push(`partition ${t}: register ${mv.from} read twice`);
        used.add(mv.from);
      }
    }
    const want = alloc.cells[(t + 1) % N];
    if (JSON.stringify(next) !== JSON.stringify(want)) {
      problems.push(`transfers after partition ${t} give [${next}] instead of [${want}]`);
    }
  }
  return problems;
}

// ---------------------------------------------------------------- random valid designs

/** Small seeded PRNG (mulberry32, the one the simulator seeds its input streams with), so that
 * every random design can be rebuilt from its seed. */
export const rng = seededRandom;

export interface RandomDesignOptions {
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
 * A random design that passes the validation rules of docs/format.md: every operation in exactly
 * one set of a unit of its kind, sets no longer than N, slots inside 0..N-1, every loop with at
 * least one delay (delay-free edges only go forward in a random order of the operations).
 */
export function randomDesign(seed: number, options: RandomDesignOptions = {}): Design {
  const r = rng(seed);
  const int = (lo: number, hi: number) => lo + Math.floor(r() * (hi - lo + 1));
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(r() * xs.length)];
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

export function shuffle<T>(xs: T[], r: () => number): T[] {
  for (let i = xs.length - 1; i > 0; i--) {
    const j = Math.floor(r() * (i + 1));
    [xs[i], xs[j]] = [xs[j], xs[i]];
  }
  return xs;
}

/** The same design with folding factor N' and every set (and boundary slot) placed anew at random. */
export function refold(design: Design, factor: number, seed: number): Design {
  const r = rng(seed);
  const sets: Record<string, (string | null)[]> = {};
  for (const [unit, set] of Object.entries(design.folding.sets)) {
    const ids = set.filter((x): x is string => x !== null);
    if (ids.length > factor) throw new Error(`set of ${unit} does not fit in ${factor} partitions`);
    const positions = shuffle(Array.from({ length: factor }, (_, p) => p), r).slice(0, ids.length);
    const out = new Array<string | null>(factor).fill(null);
    ids.forEach((id, i) => (out[positions[i]] = id));
    sets[unit] = out;
  }
  const nodes = design.nodes.map((n) =>
    n.slot !== undefined ? { ...n, slot: Math.floor(r() * factor) } : n,
  );
  return { ...design, nodes, folding: { ...design.folding, factor, sets } };
}

/**
 * A large design: `sections` second-order sections in cascade, each shaped like the folded
 * IIR section of the published example (4 adders, 4 multipliers, 12 edges with the link to the
 * next section), `perUnit` sections sharing one adder and one multiplier, so N = 4 * perUnit.
 * Positions follow the section order (a feasible folding that needs retiming on the links
 * between sections) or are shuffled (usually infeasible).
 */
export function cascadeDesign(sections: number, perUnit = 2, options: { shuffled?: boolean; seed?: number } = {}): Design {
  const r = rng(options.seed ?? 1);
  const N = 4 * perUnit;
  const nodes: DfgNode[] = [{ id: 'x', kind: 'input' }, { id: 'y', kind: 'output' }];
  const edges: [string, string, number][] = [];
  const units: [string, string, number][] = [];
  const sets: Record<string, (string | null)[]> = {};
  let prev = 'x';
  for (let s = 0; s < sections; s++) {
    const n = (k: number) => `s${s}_${k}`;
    for (let k = 1; k <= 4; k++) nodes.push({ id: n(k), kind: 'add' });
    for (let k = 5; k <= 8; k++) nodes.push({ id: n(k), kind: 'mul' });
    edges.push(
      [prev, n(1), 0],
      [n(1), n(2), 1], [n(1), n(5), 1], [n(1), n(6), 1], [n(1), n(7), 1], [n(1), n(8), 2],
      [n(3), n(1), 0], [n(4), n(2), 0], [n(5), n(3), 0], [n(6), n(4), 1], [n(7), n(3), 1], [n(8), n(4), 1],
    );
    prev = n(2);
    const u = Math.floor(s / perUnit);
    if (s % perUnit === 0) {
      units.push([`ADD${u}`, 'add', 1], [`MUL${u}`, 'mul', 2]);
      sets[`ADD${u}`] = [];
      sets[`MUL${u}`] = [];
    }
    sets[`ADD${u}`].push(n(4), n(2), n(3), n(1));
    sets[`MUL${u}`].push(n(5), n(8), n(6), n(7));
  }
  edges.push([prev, 'y', 0]);
  if (options.shuffled) {
    for (const id of Object.keys(sets)) {
      const set = sets[id];
      while (set.length < N) set.push(null);
      shuffle(set, r);
    }
  }
  return makeDesign({ name: `cascade-${sections}`, factor: N, units, nodes, edges, sets });
}

// ---------------------------------------------------------------- retiming constraints, restated

/**
 * The retiming constraints of docs/analysis.md written out from the design alone, without the engine,
 * so tests can hold the engine and outside solvers against them: one variable per operation, one
 * shared by all inputs, one by all outputs (the same one with fixed latency).
 */
export interface ConstraintRow {
  from: string;
  to: string;
  /** floor(D_F / N), or w for a tap. */
  bound: number;
  /** Has a folded delay (not a tap): counts in the objective. */
  folded: boolean;
}

/** The constraints of docs/analysis.md from the design alone, with each edge's retiming variable. */
export function constraintsOf(design: Design): { rows: ConstraintRow[]; variable: (id: string) => string } {
  const N = design.folding.factor;
  const byId = new Map(design.nodes.map((n) => [n.id, n]));
  const position = new Map<string, { slot: number; stages: number }>();
  for (const unit of design.units) {
    (design.folding.sets[unit.id] ?? []).forEach((id, p) => {
      if (id !== null) position.set(id, { slot: p, stages: unit.stages });
    });
  }
  const variable = (id: string) => {
    const kind = byId.get(id)!.kind;
    if (kind === 'input') return 'r_inputs';
    if (kind === 'output') return design.folding.latency === 'fixed' ? 'r_inputs' : 'r_outputs';
    return `r_${id}`;
  };
  const rows = design.edges.map((e) => {
    const from = byId.get(e.from)!;
    const to = byId.get(e.to)!;
    const slotTo = to.kind === 'output' || to.kind === 'input' ? to.slot : position.get(to.id)!.slot;
    if (slotTo === undefined) return { from: e.from, to: e.to, bound: e.delays, folded: false };
    const held = from.kind === 'input' && from.slot === undefined;
    const slotFrom = held ? slotTo : from.kind === 'input' ? from.slot! : position.get(from.id)!.slot;
    const stages = from.kind === 'input' ? 0 : position.get(from.id)!.stages;
    return { from: e.from, to: e.to, bound: Math.floor((N * e.delays - stages + slotTo - slotFrom) / N), folded: true };
  });
  return { rows, variable };
}
