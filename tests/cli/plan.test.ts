// `pleat plan` run as a process on designs of our own invention. Every plan it writes is handed
// to `pleat check` (the project's verifier, independent of the planner's search); the bounds the
// plans must respect are recomputed here from the design text.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, EXAMPLES, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt, 180_000);
afterAll(cleanupTemps);

// Each test starts several planner processes (the exact model runs up to --time-limit each).
const SLOW = 300_000;

/**
 * A decimating pressure-sensor filter of our own: two cascaded first-order sections with gains,
 * four adds and three multiplies, one loop per section. No folding sets: the planner places all.
 */
const BARO = `# Barometric pressure decimator for a drone altimeter (invented scenario).
format: pleat/1
name: baro-decimator
clock_ns: 8
kinds:
  add: { time: 1 }
  mul: { time: 1 }
units:
  - { id: ADD1, kind: add, stages: 0 }   # shared adder
  - { id: MUL1, kind: mul, stages: 1 }   # pipelined multiplier
nodes:
  - { id: p,  kind: input }              # raw pressure sample
  - { id: s1, kind: add }                # section 1 sum
  - { id: f1, kind: mul, coefficient: 0.75 }
  - { id: s2, kind: add }                # section 2 sum
  - { id: f2, kind: mul, coefficient: 0.5 }
  - { id: g,  kind: mul, coefficient: 1.125 }
  - { id: o1, kind: add }
  - { id: o2, kind: add }
  - { id: y,  kind: output }
edges:
  - { from: p,  to: s1 }
  - { from: f1, to: s1, port: 1 }
  - { from: s1, to: f1, delays: 1 }
  - { from: s1, to: s2 }
  - { from: f2, to: s2, port: 1 }
  - { from: s2, to: f2, delays: 1 }
  - { from: s2, to: g }
  - { from: g,  to: o1 }
  - { from: p,  to: o1, port: 1 }
  - { from: o1, to: o2 }
  - { from: s1, to: o2, port: 1 }
  - { from: o2, to: y }
folding:
  factor: 4      # four clock cycles per pressure sample
  latency: free
# end of design
`;

interface Plan {
  file: string;
  status: string;
  factor: number;
  units: { id: string; kind: string; stages: number }[];
  sets: Record<string, (string | null)[]> | null;
  objective: { registers: number; muxInputs: number; latencyAdded: number } | null;
  bound: Record<string, number> | null;
  gapPercent: number | null;
  method: string;
  seconds: number;
  pins: string[];
  reasons: string[];
  suggestion: { factor?: number; units?: Record<string, number> } | null;
  written: { file: string; edited: { from: number; to: number; what: string }[] } | null;
}

async function planJson(args: string[], cwd: string): Promise<{ code: number; designs: Plan[]; stderr: string }> {
  const r = await pleat(['plan', ...args, '--format', 'json', '--time-limit', '5'], { cwd });
  expect(r.stderr, r.stderr).not.toMatch(/internal error|\n\s+at /);
  const doc = JSON.parse(r.stdout) as { format: string; designs: Plan[] };
  expect(doc.format).toBe('pleat-plan/1');
  return { code: r.exitCode, designs: doc.designs, stderr: r.stderr };
}

/** Operations per kind, read from the design text (every node that is not an input or output). */
function opsPerKind(text: string): Map<string, number> {
  const m = new Map<string, number>();
  for (const [, kind] of text.matchAll(/\{ id: [\w.-]+,\s*kind: (\w+)/g)) {
    if (kind === 'input' || kind === 'output') continue;
    m.set(kind, (m.get(kind) ?? 0) + 1);
  }
  // Units are matched too (they carry `stages`); count only node lines.
  for (const [, kind] of text.matchAll(/\{ id: [\w.-]+,\s*kind: (\w+),\s*stages:/g)) m.set(kind, (m.get(kind) ?? 0) - 1);
  return m;
}

/** `pleat check --format json` of a planned file: the verdict and what the check computed. */
async function check(file: string, cwd: string) {
  const r = await pleat(['check', file, '--format', 'json'], { cwd });
  const rep = JSON.parse(r.stdout) as { designs: { status: string; factor: number; factorLowerBound: number; retiming: { feasible: boolean }; registers: { minimum: number } | null; diagnostics: { code: string }[] }[] };
  return { code: r.exitCode, d: rep.designs[0] };
}

describe('pleat check on a design without sets', () => {
  it('exits 2 with one diagnostic at the line of folding: that names pleat plan', async () => {
    const dir = tempDir();
    write(dir, 'baro.fold.yaml', BARO);
    const line = BARO.split('\n').findIndex((l) => l.startsWith('folding:')) + 1;
    const r = await pleat(['check', 'baro.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    const diags = r.stdout.split('\n').filter((l) => /^\s+baro\.fold\.yaml:\d+:\d+: (error|warning)/.test(l));
    expect(diags).toHaveLength(1);
    expect(diags[0]).toContain(`baro.fold.yaml:${line}:1: error plan-incomplete`);
    expect(diags[0]).toContain('pleat plan');
  }, SLOW);
});

describe('pleat plan', () => {
  it('plans a design without sets; the --out file passes pleat check and respects the bounds', async () => {
    const dir = tempDir();
    write(dir, 'baro.fold.yaml', BARO);
    const { code, designs } = await planJson(['baro.fold.yaml', '--out', 'planned.fold.yaml'], dir);
    expect(code).toBe(0);
    const p = designs[0];
    expect(['optimal', 'feasible']).toContain(p.status);
    expect(p.written?.file).toBe('planned.fold.yaml');
    const c = await check('planned.fold.yaml', dir);
    // Exit 0 or 1 by the rules, never 2 (invalid); the retiming exists (no negative folded delay left).
    expect([0, 1]).toContain(c.code);
    expect(c.d.status).not.toBe('error');
    expect(c.d.retiming.feasible).toBe(true);
    expect(c.d.factor).toBeGreaterThanOrEqual(c.d.factorLowerBound);
    // The plan's own register count is the one the check reports.
    expect(p.objective?.registers).toBe(c.d.registers?.minimum);
    // Every operation placed exactly once: 4 adds, 3 muls (counted from the text above).
    const placed = Object.values(p.sets!).flat().filter((v) => v !== null);
    expect(placed.sort()).toEqual(['f1', 'f2', 'g', 'o1', 'o2', 's1', 's2']);
    // The original stays as it was with --out.
    expect(readFileSync(path.join(dir, 'baro.fold.yaml'), 'utf8')).toBe(BARO);
  }, SLOW);

  it('--write keeps comments and every line outside the inserted sets byte for byte', async () => {
    const dir = tempDir();
    const file = write(dir, 'baro.fold.yaml', BARO);
    const { code, designs } = await planJson(['baro.fold.yaml', '--write'], dir);
    expect(code).toBe(0);
    const after = readFileSync(file, 'utf8');
    const before = BARO.split('\n');
    const now = after.split('\n');
    // The sets go after `latency: free` (the last line of folding:); everything else is the original.
    const at = before.findIndex((l) => l === '  latency: free') + 1;
    const units = Object.keys(designs[0].sets!).length;
    expect(now.slice(0, at)).toEqual(before.slice(0, at));
    expect(now.slice(at, at + 1 + units)[0]).toBe('  sets:');
    expect(now.slice(at + 1 + units)).toEqual(before.slice(at));
    expect(after).toContain('# end of design');
    expect(after).toContain('factor: 4      # four clock cycles per pressure sample');
    const c = await check('baro.fold.yaml', dir);
    expect([0, 1]).toContain(c.code);
    expect(c.d.retiming.feasible).toBe(true);
  }, SLOW);

  it('keeps pins where the design placed them and says so', async () => {
    const dir = tempDir();
    const pinned = BARO.replace('  latency: free\n', '  latency: free\n  sets:\n    MUL1: [~, ~, g]   # the gain runs in partition 2\n');
    write(dir, 'pinned.fold.yaml', pinned);
    const { code, designs } = await planJson(['pinned.fold.yaml', '--out', 'out.fold.yaml'], dir);
    expect(code).toBe(0);
    const p = designs[0];
    expect(p.pins).toEqual(['g']);
    expect(p.sets!.MUL1[2]).toBe('g');
    const text = await pleat(['plan', 'pinned.fold.yaml', '--time-limit', '5'], { cwd: dir });
    expect(text.stdout).toMatch(/^ {2}pinned {4}kept where the design placed them, marked \*: g/m);
    expect(text.stdout).toContain('g*');
    const c = await check('out.fold.yaml', dir);
    expect([0, 1]).toContain(c.code);
  }, SLOW);

  it('makes units with ids of its own scheme and never plans fewer units than ceil(ops/N)', async () => {
    const dir = tempDir();
    write(dir, 'baro.fold.yaml', BARO);
    const ops = opsPerKind(BARO);
    expect(ops.get('add')).toBe(4);
    expect(ops.get('mul')).toBe(3);
    const { code, designs } = await planJson(['baro.fold.yaml', '--factor', '2', '--units', 'add=2,mul=2', '--out', 'n2.fold.yaml'], dir);
    expect(code).toBe(0);
    const p = designs[0];
    expect(p.units.map((u) => u.id)).toEqual(['ADD1', 'ADD2', 'MUL1', 'MUL2']);
    // New units take the stages of the design's unit of the same kind.
    expect(p.units.find((u) => u.id === 'MUL2')?.stages).toBe(1);
    for (const [kind, n] of ops) expect(p.units.filter((u) => u.kind === kind).length).toBeGreaterThanOrEqual(Math.ceil(n / p.factor));
    const written = readFileSync(path.join(dir, 'n2.fold.yaml'), 'utf8');
    expect(written).toContain('  - { id: ADD1, kind: add, stages: 0 }   # shared adder\n  - { id: ADD2, kind: add, stages: 0 }\n');
    expect(written).toMatch(/factor: 2 {6}# four clock cycles/);
    const c = await check('n2.fold.yaml', dir);
    expect([0, 1]).toContain(c.code);
    expect(c.d.factor).toBe(2);
    expect(c.d.retiming.feasible).toBe(true);
  }, SLOW);

  it('exits 1 when a kind has more operations than unit slots, naming the count that would do', async () => {
    const dir = tempDir();
    write(dir, 'baro.fold.yaml', BARO);
    // 4 adds on one adder at N = 2 give 2 slots: ceil(4 / 2) = 2 adders are needed (common practice, no source).
    const { code, designs } = await planJson(['baro.fold.yaml', '--factor', '2', '--units', 'mul=2'], dir);
    expect(code).toBe(1);
    expect(designs[0].status).toBe('infeasible');
    expect(designs[0].reasons.join(' ')).toMatch(/add/);
    expect(designs[0].suggestion?.units?.add).toBe(2);
    const text = await pleat(['plan', 'baro.fold.yaml', '--factor', '2', '--units', 'mul=2'], { cwd: dir });
    expect(text.exitCode).toBe(1);
    expect(text.stdout).toMatch(/^design \S+  N=\d+  no plan$/m);
    expect(text.stdout).toMatch(/--units .*add=2/);
  }, SLOW);

  it('exits 1 when a loop needs a larger N, and never plans below the factor lower bound', async () => {
    const dir = tempDir();
    // Loop a -> m -> a with one delay and 1 + 2 = 3 pipeline stages: N >= ceil(3 / 1) = 3
    // (the folding-factor bound of a loop, common practice, no source).
    const loop = `format: pleat/1
name: servo-loop
units:
  - { id: ADD1, kind: add, stages: 1 }
  - { id: MUL1, kind: mul, stages: 2 }
nodes:
  - { id: x, kind: input }
  - { id: a, kind: add }
  - { id: m, kind: mul, coefficient: 0.5 }
  - { id: y, kind: output }
edges:
  - { from: x, to: a }
  - { from: m, to: a, port: 1 }
  - { from: a, to: m, delays: 1 }
  - { from: a, to: y }
folding:
  factor: 2
`;
    write(dir, 'loop.fold.yaml', loop);
    const low = await planJson(['loop.fold.yaml'], dir);
    expect(low.code).toBe(1);
    expect(low.designs[0].suggestion?.factor).toBe(3);
    expect(low.designs[0].reasons.join(' ')).toMatch(/loop|N/);
    const ok = await planJson(['loop.fold.yaml', '--factor', '3', '--out', 'n3.fold.yaml'], dir);
    expect(ok.code).toBe(0);
    const c = await check('n3.fold.yaml', dir);
    expect([0, 1]).toContain(c.code);
    expect(c.d.factorLowerBound).toBe(3);
    expect(c.d.factor).toBeGreaterThanOrEqual(c.d.factorLowerBound);
  }, SLOW);

  it('plans the examples with their sets taken out; every plan passes pleat check', async () => {
    const dir = tempDir();
    for (const name of ['sensor-frontend', 'equaliser-retimed', 'butterfly-stage']) {
      const text = readFileSync(path.join(EXAMPLES, `${name}.fold.yaml`), 'utf8');
      // Cut the sets block (the `sets:` line and its deeper-indented lines).
      const stripped = text.replace(/^ {2}sets:\n(?: {4}.*\n?)*/m, '');
      expect(stripped).not.toMatch(/^ {2}sets:/m);
      write(dir, `${name}.fold.yaml`, stripped);
      const { code, designs } = await planJson([`${name}.fold.yaml`, '--out', `${name}.planned.fold.yaml`], dir);
      expect(code, name).toBe(0);
      const c = await check(`${name}.planned.fold.yaml`, dir);
      expect([0, 1], name).toContain(c.code);
      expect(c.d.retiming.feasible, name).toBe(true);
      expect(designs[0].objective?.registers, name).toBe(c.d.registers?.minimum);
    }
  }, SLOW);

  it('exits 2 on invalid input with file:line:column, and on bad options', async () => {
    const dir = tempDir();
    const bad = BARO.replace('  - { from: g,  to: o1 }', '  - { from: gg, to: o1 }');
    write(dir, 'bad.fold.yaml', bad);
    const line = bad.split('\n').findIndex((l) => l.includes('from: gg')) + 1;
    const r = await pleat(['plan', 'bad.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stdout).toMatch(new RegExp(`bad\\.fold\\.yaml:${line}:\\d+: error unknown-node`));
    write(dir, 'baro.fold.yaml', BARO);
    for (const args of [['--units', 'add'], ['--factor', '0'], ['--objective', 'speed'], ['--write', '--out', 'x.fold.yaml'], ['--stages', 'add=1'], ['--time-limit', 'soon']]) {
      const e = await pleat(['plan', 'baro.fold.yaml', ...args], { cwd: dir });
      expect(e.exitCode, args.join(' ')).toBe(2);
      expect(e.stderr, args.join(' ')).toMatch(/^pleat: /);
      expect(e.stderr).not.toMatch(/\n\s+at /);
    }
    // A kind the design does not have is a problem of that design: shown in its block.
    const fft = await pleat(['plan', 'baro.fold.yaml', '--units', 'fft=2'], { cwd: dir });
    expect(fft.exitCode).toBe(2);
    expect(fft.stdout).toMatch(/^design baro-decimator  N=\S+  invalid[\s\S]*--units names kind `fft`, which the design baro-decimator does not use \(its kinds: add, mul\)/);
    expect(readFileSync(path.join(dir, 'baro.fold.yaml'), 'utf8')).toBe(BARO);
  }, SLOW);
});
