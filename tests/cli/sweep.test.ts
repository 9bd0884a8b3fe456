// `pleat sweep` run as a process. The Pareto marks are recomputed here by brute force over the
// rows (a row is on the front when no other row is at least as good in units, registers and
// sample period and better in one: the definition of Pareto dominance, common practice, no
// source); every plan of the sweep is written into the design and handed to `pleat check`.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt, 180_000);
afterAll(cleanupTemps);

// Each test starts several planner processes (the exact model runs up to --time-limit each).
const SLOW = 300_000;

/** A tide-gauge smoother of our own: 3 adds and 3 multiplies, one loop, no folding sets. */
const TIDE = `format: pleat/1
name: tide-smoother
clock_ns: 10
units:
  - { id: A1, kind: add, stages: 0 }
  - { id: M1, kind: mul, stages: 1 }
nodes:
  - { id: h,  kind: input }
  - { id: k0, kind: mul, coefficient: 0.25 }
  - { id: k1, kind: mul, coefficient: 0.5 }
  - { id: fb, kind: mul, coefficient: 0.125 }
  - { id: a0, kind: add }
  - { id: a1, kind: add }
  - { id: a2, kind: add }
  - { id: y,  kind: output }
edges:
  - { from: h,  to: k0 }
  - { from: h,  to: k1 }
  - { from: k0, to: a0 }
  - { from: k1, to: a0, port: 1, delays: 1 }
  - { from: a0, to: a1 }
  - { from: fb, to: a1, port: 1 }
  - { from: a1, to: fb, delays: 1 }
  - { from: a1, to: a2 }
  - { from: h,  to: a2, port: 1 }
  - { from: a2, to: y }
folding:
  factor: 3
`;

interface Row {
  factor: number;
  units: Record<string, number>;
  unitsTotal: number;
  status: string;
  utilization: number | null;
  registers: number | null;
  muxInputs: number | null;
  latencyAdded: number | null;
  samplePeriodNs: number | null;
  pareto: boolean;
  sets: Record<string, (string | null)[]> | null;
  unitList: { id: string; kind: string; stages: number }[];
}

async function sweepJson(dir: string, args: string[]): Promise<{ code: number; rows: Row[]; stderr: string }> {
  const r = await pleat(['sweep', 'tide.fold.yaml', '--time-limit', '3', '--format', 'json', ...args], { cwd: dir });
  expect(r.stderr, r.stderr).not.toMatch(/internal error|\n\s+at /);
  const doc = JSON.parse(r.stdout) as { format: string; rows: Row[] };
  expect(doc.format).toBe('pleat-sweep/1');
  return { code: r.exitCode, rows: doc.rows, stderr: r.stderr };
}

/** The design with a row's units and sets written in (by plain text, not by Pleat's write-back). */
function withPlan(row: Row): string {
  const units = row.unitList.map((u) => `  - { id: ${u.id}, kind: ${u.kind}, stages: ${u.stages} }`).join('\n');
  const sets = Object.entries(row.sets!).map(([u, l]) => `    ${u}: [${l.map((v) => v ?? '~').join(', ')}]`).join('\n');
  return TIDE.replace(/units:\n(?: {2}- .*\n)+/, `units:\n${units}\n`).replace('  factor: 3\n', `  factor: ${row.factor}\n  sets:\n${sets}\n`);
}

describe('pleat sweep', () => {
  it('gives one row per factor with the fewest units, and the Pareto front recomputed here', async () => {
    const dir = tempDir();
    write(dir, 'tide.fold.yaml', TIDE);
    const { code, rows, stderr } = await sweepJson(dir, ['--factors', '1..5']);
    expect(code).toBe(0);
    // Not a terminal: no progress on standard error.
    expect(stderr).toBe('');
    expect(rows.map((r) => r.factor)).toEqual([1, 2, 3, 4, 5]);
    const ops = { add: 3, mul: 3 };
    for (const r of rows) {
      // ceil(operations / N) units of each kind at least (common practice, no source).
      for (const [k, n] of Object.entries(ops)) expect(r.units[k], `N=${r.factor} ${k}`).toBeGreaterThanOrEqual(Math.ceil(n / r.factor));
      expect(r.unitsTotal).toBe(Object.values(r.units).reduce((a, b) => a + b, 0));
      if (r.status !== 'infeasible') {
        expect(r.samplePeriodNs).toBe(10 * r.factor);
        // Utilization = operations / (units x N) (hardware utilization efficiency, common practice, no source).
        expect(r.utilization).toBeCloseTo(6 / (r.unitsTotal * r.factor), 6);
      }
    }
    const planned = rows.filter((r) => r.status !== 'infeasible');
    expect(planned.length).toBeGreaterThan(0);
    const key = (r: Row) => [r.unitsTotal, r.registers!, r.samplePeriodNs!];
    for (const r of planned) {
      const a = key(r);
      const dominated = planned.some((o) => o !== r && key(o).every((x, i) => x <= a[i]) && key(o).some((x, i) => x < a[i]));
      expect(r.pareto, `N=${r.factor}`).toBe(!dominated);
    }
    for (const r of rows.filter((x) => x.status === 'infeasible')) expect(r.pareto).toBe(false);
  }, SLOW);

  it('every plan of the sweep passes pleat check', async () => {
    const dir = tempDir();
    write(dir, 'tide.fold.yaml', TIDE);
    const { rows } = await sweepJson(dir, ['--factors', '2..4']);
    for (const r of rows.filter((x) => x.status !== 'infeasible')) {
      write(dir, `n${r.factor}.fold.yaml`, withPlan(r));
      const c = await pleat(['check', `n${r.factor}.fold.yaml`, '--format', 'json'], { cwd: dir });
      expect([0, 1], `N=${r.factor}: ${c.stdout.slice(0, 400)}`).toContain(c.exitCode);
      const d = JSON.parse(c.stdout).designs[0];
      expect(d.retiming.feasible).toBe(true);
      expect(d.registers.minimum).toBe(r.registers);
    }
  }, SLOW);

  it('fixed unit counts, text and CSV output', async () => {
    const dir = tempDir();
    write(dir, 'tide.fold.yaml', TIDE);
    const { rows } = await sweepJson(dir, ['--factors', '2,3', '--units', 'add=1,mul=1']);
    // N = 2 gives one unit of each kind 2 slots for 3 operations: no plan; N = 3 fits.
    expect(rows.map((r) => [r.factor, r.status === 'infeasible'])).toEqual([[2, true], [3, false]]);
    const csv = await pleat(['sweep', 'tide.fold.yaml', '--factors', '2,3', '--units', 'add=1,mul=1', '--time-limit', '3', '--format', 'csv'], { cwd: dir });
    expect(csv.exitCode).toBe(0);
    const lines = csv.stdout.split('\r\n').filter(Boolean);
    expect(lines[0].split(',').slice(0, 5)).toEqual(['factor', 'units_add', 'units_mul', 'units_total', 'status']);
    expect(lines).toHaveLength(3);
    expect(lines[1].startsWith('2,1,1,2,infeasible,')).toBe(true);
    expect(lines[2].split(',')[6]).toBe(String(rows[1].registers));
    const text = await pleat(['sweep', 'tide.fold.yaml', '--factors', '2,3', '--units', 'add=1,mul=1', '--time-limit', '3'], { cwd: dir });
    expect(text.stdout).toMatch(/Pareto front over \(units, registers, sample period\): N = 3/);
    expect(text.stdout).toMatch(/^\s*2\s+1\s+1\s+-/m);
  }, SLOW);

  it('exits 1 when no factor admits a plan and 2 on bad input', async () => {
    const dir = tempDir();
    write(dir, 'tide.fold.yaml', TIDE);
    const none = await pleat(['sweep', 'tide.fold.yaml', '--factors', '1..2', '--units', 'add=1,mul=1', '--time-limit', '3'], { cwd: dir });
    expect(none.exitCode).toBe(1);
    expect(none.stdout).toContain('no folding factor in the range admits a plan');
    for (const args of [['--factors', '5..2'], ['--factors', 'many'], ['--factors', '2..4', '--units', 'dsp=2'], ['--factors', '2..4', '--format', 'xml']]) {
      const e = await pleat(['sweep', 'tide.fold.yaml', ...args], { cwd: dir });
      expect(e.exitCode, args.join(' ')).toBe(2);
      expect(e.stderr).toMatch(/^pleat: /);
    }
    write(dir, 'bad.fold.yaml', TIDE.replace('  - { from: a2, to: y }', '  - { from: a9, to: y }'));
    const line = TIDE.split('\n').findIndex((l) => l.includes('from: a2, to: y')) + 1;
    const bad = await pleat(['sweep', 'bad.fold.yaml', '--factors', '2..3'], { cwd: dir });
    expect(bad.exitCode).toBe(2);
    expect(bad.stderr).toMatch(new RegExp(`bad\\.fold\\.yaml:${line}:\\d+: error unknown-node`));
  }, SLOW);
});
