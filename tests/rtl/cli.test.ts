// `pleat simulate` and `pleat rtl` as a user runs them: the built CLI as a process.
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execa } from 'execa';
import { cleanupTemps, ensureBuilt, EXAMPLES, pleat, ROOT, tempDir, write } from '../cli/helpers';
import { hardwareSummaryProblem } from '../../shared/report/hardwareSummary';

beforeAll(async () => {
  await ensureBuilt();
  const r = await execa('bash', [path.join(ROOT, 'scripts/ensure-hdl-tools.sh')], { reject: false, all: true });
  if (r.exitCode !== 0) throw new Error(`the rtl command tests need iverilog and yosys; scripts/ensure-hdl-tools.sh failed:\n${r.all}`);
}, 600_000);
afterAll(cleanupTemps);

const sensor = path.join(EXAMPLES, 'sensor-frontend.fold.yaml');
// Our own fixture: retiming needed, one iteration of latency, a tap and a slotted output.
const retimed = path.join(ROOT, 'tests/sim/fixtures/smoothing-retimed.fold.yaml');
const unretimable = path.join(EXAMPLES, 'envelope-unretimable.fold.yaml');

const biquad = path.join(ROOT, 'tests/sim/fixtures/notch-biquad.fold.yaml');
const biquadQ = path.join(ROOT, 'tests/sim/fixtures/notch-biquad-q.fold.yaml');

describe('pleat simulate: fixed point', () => {
  it('a biquad that outgrows 16 bits matches its reference but says so, and max_overflows fails it (exit 1)', async () => {
    const plain = await pleat(['simulate', biquad, '--iterations', '32', '--no-color']);
    expect(plain.exitCode, plain.stderr).toBe(0);
    expect(plain.stdout).toMatch(/^match /m);
    expect(plain.stdout).toMatch(/overflow: \d+ exact values outside their format .* first at b1 \(Q15\.0\)/);
    expect(plain.stdout).toMatch(/bit growth \(impulse responses\): 5 signals can exceed their format/);
    const gated = await pleat(['simulate', biquad, '--iterations', '32', '--max-overflows', '0', '--no-color']);
    expect(gated.exitCode).toBe(1);
    expect(gated.stdout).toMatch(/RULE FAILED max_overflows: \d+ exact values outside their format, at most 0 allowed/);
  });

  it('the scaled biquad in fixed point: no overflow, SQNR against the exact model, min_sqnr_db gates (JSON)', async () => {
    const ok = await pleat(['simulate', biquadQ, '--arithmetic', 'fixed', '--iterations', '100', '--min-sqnr-db', '40', '--format', 'json']);
    expect(ok.exitCode, ok.stderr).toBe(0);
    const j = JSON.parse(ok.stdout);
    expect(j.simulation.fixedPoint.overflowCount).toBe(0);
    expect(j.simulation.fixedPoint.accuracy[0].sqnrDb).toBeGreaterThan(40);
    expect(j.gates).toEqual([expect.objectContaining({ rule: 'min_sqnr_db', passed: true, source: 'option' })]);
    const strict = await pleat(['simulate', biquadQ, '--arithmetic', 'fixed', '--iterations', '100', '--min-sqnr-db', '200', '--format', 'json']);
    expect(strict.exitCode).toBe(1);
  });
});

describe('pleat simulate', () => {
  it('reports a match and the alignment of every output (exit 0)', async () => {
    const r = await pleat(['simulate', retimed, '--iterations', '40', '--seed', '9']);
    expect(r.exitCode, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^match {2}.*pressure-smoothing/m);
    expect(r.stdout).toContain('compared 40 samples of each of 2 outputs (80 in all): 41 iterations');
    expect(r.stdout).toContain('retiming adds 1 iteration of latency');
    expect(r.stdout).toMatch(/y: tap; iteration l shows sample l - 1; sample 0\+k valid in cycle 6\+4k/);
    expect(r.stdout).toMatch(/z: slot; iteration l shows sample l - 1; sample 0\+k valid in cycle 8\+4k/);
  });

  it('writes JSON with the simulation and the control tables', async () => {
    const r = await pleat(['simulate', sensor, '--format', 'json', '--arithmetic', 'fixed']);
    expect(r.exitCode, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j.format).toBe('pleat-simulation/1');
    expect(j.simulation).toMatchObject({ match: true, firstMismatch: null, arithmetic: 'fixed', samplesPerOutput: 64 });
    expect(j.control.muxes.length).toBeGreaterThan(0);
    expect(j.control.registerTables.length).toBe(j.control.registers);
  });

  it('prints the control tables on request', async () => {
    const r = await pleat(['simulate', sensor, '--tables']);
    expect(r.exitCode).toBe(0);
    expect(r.stdout).toMatch(/multiplexers \(operand port/);
    expect(r.stdout).toMatch(/^ {4}R0 /m);
  });

  it('exits 1 when the plan has no feasible datapath', async () => {
    const r = await pleat(['simulate', unretimable]);
    expect(r.exitCode).toBe(1);
    expect(r.stderr).toMatch(/no feasible folded datapath/);
  });

  it('exits 2 with file, line and column for an operation without arithmetic', async () => {
    const dir = tempDir();
    const f = write(
      dir,
      'mac.fold.yaml',
      `format: pleat/1
name: mac-plan
units: [{ id: M, kind: mac, stages: 1 }]
nodes:
  - { id: x, kind: input }
  - { id: m, kind: mac }
  - { id: y, kind: output }
edges:
  - { from: x, to: m }
  - { from: m, to: y }
folding: { factor: 1, sets: { M: [m] } }
`,
    );
    const r = await pleat(['simulate', f], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^mac\.fold\.yaml:6:5: error sim-no-arithmetic: node m of kind mac has no arithmetic/m);
    expect(r.stderr).not.toMatch(/at .*\.js:\d+/); // no stack trace
  });

  it('exits 2 on a bad option value', async () => {
    const r = await pleat(['simulate', sensor, '--iterations', '0']);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/expected 1\.\.1000000/);
  });
});

describe('pleat rtl', () => {
  it('writes the RTL, the testbench and a JSON record; --verify runs it in Icarus Verilog', async () => {
    const dir = tempDir();
    const out = path.join(dir, 'rtl');
    const r = await pleat(['rtl', retimed, '--out', out, '--verify', '--iterations', '40']);
    expect(r.exitCode, r.stderr + r.stdout).toBe(0);
    // One module file per unit kind and stages (docs/rtl.md): add with 1 stage, mul with 2.
    for (const f of ['pressure_smoothing.v', 'pressure_smoothing_mul_s2.v', 'pressure_smoothing_add_s1.v', 'pressure_smoothing_tb.v', 'pressure_smoothing.rtl.json']) {
      expect(existsSync(path.join(out, f)), f).toBe(true);
    }
    expect(r.stdout).toMatch(/testbench: PASS pressure_smoothing: 80 samples on 2 outputs, 0 mismatches/);
    expect(r.stdout).toMatch(/starting point: timing closure and sign-off verification remain the engineer's/);
    const j = JSON.parse(readFileSync(path.join(out, 'pressure_smoothing.rtl.json'), 'utf8'));
    expect(j.verify.passed).toBe(true);
    expect(j.ports.map((p: { port: string }) => p.port)).toEqual(['x', 'y', 'z']);
    expect(j.latencyAdded).toBe(1);
    const top = readFileSync(path.join(out, 'pressure_smoothing.v'), 'utf8');
    expect(top).toMatch(/module pressure_smoothing #\(\n {2}parameter W = 16\n\) \(/);
    expect(top).toMatch(/output reg {2}y_valid/);
  }, 120_000);

  it('--area synthesizes the folded and the fully parallel RTL with Yosys and records both', async () => {
    const dir = tempDir();
    const out = path.join(dir, 'rtl');
    const r = await pleat(['rtl', retimed, '--out', out, '--area', '--format', 'json']);
    expect(r.exitCode, r.stderr).toBe(0);
    const j = JSON.parse(r.stdout);
    for (const side of ['folded', 'parallel']) {
      expect(j.area[side].cells, side).toBeGreaterThan(0);
      expect(j.area[side].registers, side).toBeGreaterThan(0);
      expect(j.area[side].depth, side).toBeGreaterThan(0);
    }
    expect(j.area.compared).toMatchObject({ stages: 'folded', multipliers: 'general' });
    // The summary beside the RTL passes the schema the upload and the server use.
    const summary = JSON.parse(readFileSync(path.join(out, 'pressure_smoothing.hardware.json'), 'utf8'));
    expect(hardwareSummaryProblem(summary)).toBeNull();
    expect(summary).toMatchObject({ format: 'pleat-hardware', version: 1, top: 'pressure_smoothing' });
    expect(summary.folded).toEqual({ cells: j.area.folded.cells, flipFlops: j.area.folded.registers, depth: j.area.folded.depth, factor: j.factor });
    // No claim that sharing pays here: constant gains of a parallel datapath synthesize to
    // shift-and-add, while a shared multiplier with a coefficient multiplexer is a full one.
    expect(existsSync(path.join(out, 'parallel', 'pressure_smoothing_parallel.v'))).toBe(true);
    const text = await pleat(['rtl', retimed, '--out', out, '--area']);
    expect(text.stdout).toMatch(/^ {2}cells +\d+ +\d+$/m);
    expect(text.stdout).toMatch(/^ {2}flip-flops +\d+ +\d+$/m);
    expect(text.stdout).toMatch(/^ {2}logic depth +\d+ +\d+$/m);
    expect(text.stdout).toMatch(/multipliers general on both sides/);
  }, 300_000);

  it('exits 1 for a plan without a feasible datapath and writes nothing', async () => {
    const dir = tempDir();
    const r = await pleat(['rtl', unretimable, '--out', path.join(dir, 'x')]);
    expect(r.exitCode).toBe(1);
    expect(existsSync(path.join(dir, 'x'))).toBe(false);
  });

  it('needs --out', async () => {
    const r = await pleat(['rtl', sensor]);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/--out/);
  });

  it('refuses an empty --out (it would write into the working folder)', async () => {
    const dir = tempDir();
    const r = await pleat(['rtl', retimed, '--out', ''], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/--out needs a folder name/);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('refuses a folder with files it did not write unless --force; replaces its own earlier output and says so', async () => {
    const dir = tempDir();
    const out = path.join(dir, 'rtl');
    write(out, 'notes.txt', 'mine\n');
    const refused = await pleat(['rtl', retimed, '--out', out]);
    expect(refused.exitCode).toBe(2);
    expect(refused.stderr).toMatch(/already holds files that pleat rtl did not write.*--force/);
    expect(readdirSync(out)).toEqual(['notes.txt']);
    const forced = await pleat(['rtl', retimed, '--out', out, '--force']);
    expect(forced.exitCode, forced.stderr).toBe(0);
    expect(forced.stderr).toMatch(/--force: writing into/);
    expect(readFileSync(path.join(out, 'notes.txt'), 'utf8')).toBe('mine\n');

    const fresh = path.join(dir, 'fresh');
    expect((await pleat(['rtl', retimed, '--out', fresh])).exitCode).toBe(0);
    const again = await pleat(['rtl', sensor, '--out', fresh]);
    expect(again.exitCode, again.stderr).toBe(0);
    expect(again.stderr).toMatch(/replacing the earlier output of pleat rtl in .*pressure_smoothing\.rtl\.json/);
    // Nothing of the earlier top module is left beside the new one.
    expect(readdirSync(fresh).filter((f) => f.startsWith('pressure_smoothing'))).toEqual([]);
  });

  it('an input named like a strobe: --verify passes and <top>.rtl.json lists the renamed strobe', async () => {
    const dir = tempDir();
    const f = write(
      dir,
      'strobe.fold.yaml',
      `format: pleat/1
name: strobe-clash
units: [{ id: ADD, kind: add, stages: 1 }]
nodes:
  - { id: x, kind: input }
  - { id: y_valid, kind: input }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: s }
  - { from: y_valid, to: s }
  - { from: s, to: y }
folding: { factor: 1, sets: { ADD: [s] } }
`,
    );
    const out = path.join(dir, 'rtl');
    const r = await pleat(['rtl', f, '--out', out, '--verify']);
    expect(r.exitCode, r.stderr + r.stdout).toBe(0);
    expect(r.stdout).toMatch(/testbench: PASS strobe_clash: 32 samples on 1 outputs, 0 mismatches/);
    expect(r.stdout).toMatch(/renamed strobe of y: y_valid -> y_valid_2/);
    const j = JSON.parse(readFileSync(path.join(out, 'strobe_clash.rtl.json'), 'utf8'));
    expect(j.renamed).toContainEqual({ role: 'strobe', of: 'y', wanted: 'y_valid', name: 'y_valid_2', reason: '`y_valid` is already the port of input y_valid' });
    expect(j.ports.find((p: { node: string }) => p.node === 'y').valid).toBe('y_valid_2');
  }, 120_000);

  it('a datapath of a million registers (one edge of 10^6 delays) is refused at once with the figures, by simulate and rtl', async () => {
    const dir = tempDir();
    const f = write(
      dir,
      'line.fold.yaml',
      `format: pleat/1
name: long-line
units: [{ id: MUL, kind: mul, stages: 1 }, { id: ADD, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: g, kind: mul, coefficient: 0.5 }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: g }
  - { from: g, to: s, delays: 1000000 }
  - { from: x, to: s }
  - { from: s, to: y }
folding: { factor: 2, sets: { MUL: [g], ADD: [~, s] } }
`,
    );
    // This used to run for about a minute and 1.2 GB before printing a match.
    for (const args of [['simulate', f], ['rtl', f, '--out', path.join(dir, 'rtl')]]) {
      const r = await pleat(args, { cwd: dir });
      expect(r.exitCode, args[0]).toBe(1);
      expect(r.stderr).toMatch(/too large to build: the datapath needs 1,000,000 registers over 2 partitions \(2,000,000 register cells\)/);
      expect(r.stderr).not.toMatch(/at .*\.js:\d+/);
    }
    expect(existsSync(path.join(dir, 'rtl'))).toBe(false);
  });
});
