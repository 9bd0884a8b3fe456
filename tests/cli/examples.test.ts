// Every example design through the built CLI, with its expected status. Where an example's
// status rests on the analysis, it is confirmed independently: retiming feasibility by a general
// LP solver (javascript-lp-solver) on the difference constraints, and the iteration bound by
// enumerating elementary circuits (elementary-circuits-directed-graph, Johnson's algorithm).
import { readFileSync, readdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { load } from 'js-yaml';
import solver from 'javascript-lp-solver';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLES, cleanupTemps, ensureBuilt, pleat } from './helpers';

// The package ships CommonJS without type declarations.
const findCircuits = createRequire(import.meta.url)('elementary-circuits-directed-graph') as (adj: number[][]) => number[][];

const EXPECTED: Record<string, { status: 'pass' | 'fail'; retimed: boolean | null }> = {
  'sensor-frontend.fold.yaml': { status: 'pass', retimed: false },
  'channelizer-taps.fold.yaml': { status: 'pass', retimed: false },
  'equaliser-retimed.fold.yaml': { status: 'pass', retimed: true },
  'envelope-unretimable.fold.yaml': { status: 'fail', retimed: null },
  'butterfly-stage.fold.yaml': { status: 'pass', retimed: true },
  'generated-hydrophone-bank.fold.yaml': { status: 'pass', retimed: true },
  'vibration-axes.fold.yaml': { status: 'pass', retimed: true },
};

interface RawDesign {
  name: string;
  description?: string;
  kinds?: Record<string, { time: number }>;
  units: { id: string; kind: string; stages: number }[];
  nodes: { id: string; kind: string; slot?: number; time?: number }[];
  edges: { from: string; to: string; delays?: number }[];
  folding: { factor: number; sets: Record<string, (string | null)[]>; latency?: 'free' | 'fixed' };
}

function readExample(file: string): RawDesign {
  return load(readFileSync(path.join(EXAMPLES, file), 'utf8')) as RawDesign;
}

/**
 * Folded delays by the folding equation D_F = N*w - P_U + v - u, with the conventions of the
 * project's analysis notes: held inputs give N*w, taps into outputs without slot give null.
 */
function foldedDelays(d: RawDesign): { from: string; to: string; w: number; df: number | null }[] {
  const N = d.folding.factor;
  const kind = new Map(d.nodes.map((n) => [n.id, n.kind]));
  const slot = new Map<string, number>();
  const stages = new Map<string, number>();
  for (const n of d.nodes) if (n.slot !== undefined) slot.set(n.id, n.slot);
  for (const u of d.units) (d.folding.sets[u.id] ?? []).forEach((id, p) => {
    if (id) {
      slot.set(id, p);
      stages.set(id, u.stages);
    }
  });
  return d.edges.map((e) => {
    const w = e.delays ?? 0;
    let df: number | null;
    if (kind.get(e.to) === 'output' && !slot.has(e.to)) df = null;
    else if (kind.get(e.from) === 'input' && !slot.has(e.from)) df = N * w;
    else df = N * w - (stages.get(e.from) ?? 0) + slot.get(e.to)! - slot.get(e.from)!;
    return { from: e.from, to: e.to, w, df };
  });
}

/** Is there an integer retiming with every retimed folded delay >= 0? Asked of an LP solver. */
function retimingFeasibleByLp(d: RawDesign): boolean {
  const N = d.folding.factor;
  const kind = new Map(d.nodes.map((n) => [n.id, n.kind]));
  // All inputs share one retiming value and all outputs another (latency free).
  const v = (id: string) => (kind.get(id) === 'input' ? 'IN' : kind.get(id) === 'output' ? (d.folding.latency === 'fixed' ? 'IN' : 'OUT') : `r_${id}`);
  const constraints: Record<string, { max: number }> = {};
  const variables: Record<string, Record<string, number>> = {};
  for (const [i, e] of foldedDelays(d).entries()) {
    // r(U) - r(V) <= floor(D_F / N), or <= w for a tap (the retimed delay stays >= 0).
    const bound = e.df === null ? e.w : Math.floor(e.df / N);
    const [a, b] = [v(e.from), v(e.to)];
    if (a === b) {
      // Both ends share one value (tied boundary): the constraint reads 0 <= bound.
      if (bound < 0) return false;
      continue;
    }
    const c = `c${i}`;
    constraints[c] = { max: bound };
    (variables[a] ??= { cost: 0 })[c] = 1;
    (variables[b] ??= { cost: 0 })[c] = -1;
  }
  // A difference-constraint matrix is totally unimodular, so LP feasibility means an integer
  // solution exists (common practice, no source). Variables >= 0 lose nothing: shifts are free.
  const result = solver.Solve({ optimize: 'cost', opType: 'min', constraints, variables }) as { feasible?: boolean };
  return result.feasible === true;
}

/** Iteration bound by enumerating every loop: max of (sum of times) / (sum of delays). */
function iterationBoundByCircuits(d: RawDesign): number | null {
  const ids = d.nodes.map((n) => n.id);
  const index = new Map(ids.map((id, i) => [id, i]));
  const unitOf = new Map<string, number>();
  for (const u of d.units) for (const id of d.folding.sets[u.id] ?? []) if (id) unitOf.set(id, u.stages);
  const byId = new Map(d.nodes.map((n) => [n.id, n]));
  const time = (id: string) => {
    const n = byId.get(id)!;
    return n.time ?? d.kinds?.[n.kind]?.time ?? unitOf.get(id) ?? 0;
  };
  const adj: number[][] = ids.map(() => []);
  const delay = new Map<string, number>(); // smallest delay between two nodes gives the largest ratio
  for (const e of d.edges) {
    const [a, b] = [index.get(e.from)!, index.get(e.to)!];
    const key = `${a},${b}`;
    if (!delay.has(key)) adj[a].push(b);
    delay.set(key, Math.min(delay.get(key) ?? Infinity, e.delays ?? 0));
  }
  let best: number | null = null;
  for (const c of findCircuits(adj)) {
    let t = 0;
    let w = 0;
    for (let i = 0; i + 1 < c.length; i++) {
      t += time(ids[c[i]]);
      w += delay.get(`${c[i]},${c[i + 1]}`)!;
    }
    const ratio = t / w;
    if (best === null || ratio > best) best = ratio;
  }
  return best;
}

let report: { verdict: string; designs: Record<string, any>[] };
let exitCode: number;
let textOut: string;

beforeAll(async () => {
  await ensureBuilt();
  const r = await pleat(['check', '--format', 'json'], { cwd: EXAMPLES });
  exitCode = r.exitCode;
  report = JSON.parse(r.stdout);
  textOut = (await pleat(['check'], { cwd: EXAMPLES })).stdout;
});
afterAll(cleanupTemps);

describe('examples/', () => {
  it('holds the documented set of designs, each with a description', () => {
    const files = readdirSync(EXAMPLES).filter((f) => f.endsWith('.fold.yaml')).sort();
    expect(files).toEqual(Object.keys(EXPECTED).sort());
    for (const f of files) expect(readExample(f).description?.length ?? 0).toBeGreaterThan(40);
    const big = readExample('generated-hydrophone-bank.fold.yaml');
    expect(big.nodes.length).toBeGreaterThan(2000);
  });

  it('`pleat check` in examples/ exits 1: one example fails on purpose, the rest pass', () => {
    expect(exitCode).toBe(1);
    expect(report.verdict).toBe('fail');
    expect(report.designs).toHaveLength(Object.keys(EXPECTED).length);
    expect(textOut).toMatch(/^gate broken: flowmeter-envelope breaks negative_delays; 6 of 7 designs fold$/m);
  });

  for (const [file, want] of Object.entries(EXPECTED)) {
    it(`${file}: ${want.status}`, () => {
      const d = report.designs.find((x) => x.file === file)!;
      expect(d, file).toBeDefined();
      expect(d.status).toBe(want.status);
      expect(d.diagnostics.filter((x: { severity: string }) => x.severity === 'error')).toEqual([]);
      const raw = readExample(file);
      // Folded delays agree with the folding equation computed here from the file.
      expect(d.edges.map((e: { foldedDelay: number | null }) => e.foldedDelay)).toEqual(foldedDelays(raw).map((e) => e.df));
      if (want.retimed !== null) expect(d.retiming.needed).toBe(want.retimed);
      // The LP solver agrees on whether a retiming exists.
      if (raw.nodes.length < 200) expect(retimingFeasibleByLp(raw)).toBe(d.retiming.feasible);
      // Enumerated loops give the same iteration bound (null: no loop).
      const bound = iterationBoundByCircuits(raw);
      if (bound === null) expect(d.iterationBound).toBeNull();
      else expect(d.iterationBound.value).toBeCloseTo(bound, 9);
    });
  }

  it('the failing example shows why: the loop, its stages and the folding factor it needs', () => {
    const d = report.designs.find((x) => x.file === 'envelope-unretimable.fold.yaml')!;
    expect(d.violations.map((v: { rule: string; source: string }) => [v.rule, v.source])).toEqual([['negative_delays', 'repository']]);
    // Loop ai -> mi -> ai: stages 1 (adder) + 4 (multiplier) over 1 delay, so N >= 5.
    expect(d.retiming.conflict.minFactor).toBe(5);
    expect(d.retiming.conflict.loopStages).toBe(5);
    expect(d.retiming.conflict.loopDelays).toBe(1);
    expect(textOut).toMatch(/no retiming exists: loop .* needs N >= 5, the plan has N=2/);
  });
});
