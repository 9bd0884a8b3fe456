// Serial ports of the stream interface (docs/format.md, "Serial ports"; docs/rtl.md): the design
// syntax and its errors, and the generated RTL run by outside tools: Icarus Verilog runs the
// self-checking testbench (random stalls on both sides, every sample checked against the integer
// reference model) and Verilator lints with -Wall. Tools from scripts/ensure-hdl-tools.sh.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execa } from 'execa';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { controlTables } from '../../shared/hardware/control';
import { resolveArithmetic } from '../../shared/hardware/reference';
import { alignSerialOutputs, generateRtl, generateTestbench, testVectors, type RtlBundle } from '../../shared/hardware/rtl';
import type { Design, Diagnostic } from '../../shared/types';

const ROOT = path.resolve(__dirname, '../..');
const EXAMPLE = readFileSync(path.join(ROOT, 'examples/vibration-axes.fold.yaml'), 'utf8');
const temps: string[] = [];

beforeAll(async () => {
  const r = await execa('bash', [path.join(ROOT, 'scripts/ensure-hdl-tools.sh')], { reject: false, all: true });
  if (r.exitCode !== 0) throw new Error(`the RTL tests need Icarus Verilog and Verilator, and scripts/ensure-hdl-tools.sh could not install them:\n${r.all}`);
}, 600_000);

afterAll(() => {
  for (const d of temps) rmSync(d, { recursive: true, force: true });
});

function load(text: string): Design {
  const r = loadDesign(text);
  expect(r.diagnostics.filter((d) => d.severity === 'error')).toEqual([]);
  return r.design!;
}

function build(design: Design, seed: number, stream = true): { bundle: RtlBundle; dir: string; tb: string } {
  const control = controlTables(design, analyze(design)).control!;
  const bundle = generateRtl(design, control, stream ? { interface: 'stream' } : {});
  const vectors = testVectors(design, resolveArithmetic(design).graph!, control, { iterations: 30, seed, fixed: bundle.fixed });
  const tb = generateTestbench(bundle, control, vectors);
  const dir = mkdtempSync(path.join(tmpdir(), 'pleat-serial-'));
  temps.push(dir);
  for (const f of [...bundle.files, tb]) writeFileSync(path.join(dir, f.name), f.text);
  return { bundle, dir, tb: tb.name };
}

async function runTestbench(b: { bundle: RtlBundle; dir: string; tb: string }): Promise<string> {
  const files = b.bundle.files.map((f) => f.name);
  const c = await execa('iverilog', ['-g2001', '-o', 'sim.vvp', b.tb, ...files], { cwd: b.dir, reject: false, all: true });
  expect(c.exitCode, `iverilog:\n${c.all}`).toBe(0);
  return String((await execa('vvp', ['-n', 'sim.vvp'], { cwd: b.dir, reject: false, all: true })).all);
}

async function lint(b: { bundle: RtlBundle; dir: string }): Promise<string> {
  const files = b.bundle.files.map((f) => f.name);
  const r = await execa('verilator', ['--lint-only', '-Wall', '--top-module', b.bundle.top, ...files], { cwd: b.dir, reject: false, all: true });
  return `${r.exitCode === 0 ? '' : `exit ${r.exitCode}\n`}${String(r.all).trim()}`;
}

// Variants of the example (our own): the tilt computed first and leaving through a tap one delay
// late, so the two members of the output port would first load more than N cycles apart; the
// input port lists its axes against the order of their slots, and a held input sits on it.
const LATE_TILT = EXAMPLE.replace('ALU: [wxy, level, avg, tilt]', 'ALU: [tilt, wxy, level, avg]').replace('  - { from: tilt,  to: lean }', '  - { from: tilt,  to: lean, delays: 1 }');
const MIXED_INPUTS = EXAMPLE.replace('  - { id: ay,    kind: input, slot: 1 }', '  - { id: ay,    kind: input }').replace('inputs: [ax, ay, az]', 'inputs: [az, ay, ax]');
const ONE_SERIAL = EXAMPLE.replace('  - { id: result, outputs: [smooth, lean] }\n', '');

describe('serial ports in the RTL (Icarus Verilog, random stalls on both sides)', () => {
  const cases: [string, string][] = [
    ['the example', EXAMPLE],
    ['members a whole iteration apart', LATE_TILT],
    ['inputs out of slot order with a held one', MIXED_INPUTS],
    ['a serial input beside ordinary outputs', ONE_SERIAL],
  ];
  for (const [what, text] of cases) {
    it(`${what}: every sample checked, PASS for three seeds; Verilator -Wall clean`, async () => {
      const design = load(text);
      for (const seed of [1, 7, 23]) {
        const b = build(design, seed);
        if (seed === 1) {
          expect(await lint(b)).toBe('');
          expect(b.bundle.serial?.map((s) => s.port)).toEqual(design.serial!.map((s) => s.id));
        }
        const out = await runTestbench(b);
        // 30 samples on each of the two outputs, all of them compared.
        expect(out, out).toMatch(new RegExp(`^PASS ${b.bundle.top}: 60 samples on 2 outputs, 0 mismatches$`, 'm'));
        expect(out).not.toMatch(/MISMATCH/);
      }
    }, 240_000);
  }

  it('a broken serial order is caught: the testbench fails when the port moves the members the other way round', async () => {
    const design = load(EXAMPLE);
    const b = build(design, 3);
    const top = b.bundle.files[0];
    // Swap which member the output port shows first (the index still says member 0 first).
    const broken = top.text.replace(/assign result = \(pl_sidx_result == 1'd0\) \? smooth : lean;/, "assign result = (pl_sidx_result == 1'd0) ? lean : smooth;");
    expect(broken).not.toBe(top.text);
    writeFileSync(path.join(b.dir, top.name), broken);
    const out = await runTestbench(b);
    expect(out).toMatch(/^FAIL /m);
  }, 120_000);

  it('members a whole iteration apart start together: the earlier one skips its first sample', () => {
    // Derived by hand from the schedule (common practice, no source). N = 4; ALU is [tilt, wxy,
    // level, avg] with 0 stages; retiming moves wxy, level, avg, tilt and both outputs by r = 1
    // (pleat check lists it). smooth is a tap on avg: it loads at cycle 3 of the iteration; its
    // edge keeps w_r = 0 + 1 - 1 = 0 delays, so lag = r - w_r = 1 and the first load waits one
    // iteration: cycle 4*1 + 3 = 7. lean is a tap on tilt (cycle 0) over one delay:
    // w_r = 1 + 1 - 1 = 1, lag = 1 - 1 = 0, first load at cycle 0 with sample 0. Cycle 0 lies more
    // than N - 1 = 3 cycles before cycle 7, so on the serial port lean starts one iteration later
    // (cycle 4, sample 1) and each member's next load then follows every member's current one.
    const design = load(LATE_TILT);
    const control = controlTables(design, analyze(design)).control!;
    const at = (c: typeof control) => c.outputs.map((o) => [o.node, o.lag, o.firstSample, o.validAfterIterations]);
    expect(at(control)).toEqual([
      ['smooth', 1, 0, 1],
      ['lean', 0, 0, 0],
    ]);
    expect(at(alignSerialOutputs(design, control))).toEqual([
      ['smooth', 1, 0, 1],
      ['lean', 0, 1, 1],
    ]);
  });

  it('the strobe interface ignores serial ports: the same Verilog and testbench as without them', () => {
    const withSerial = build(load(EXAMPLE), 5, false);
    const without = build(load(EXAMPLE.replace(/^serial:\n(?: {2}- .*\n)+/m, '')), 5, false);
    expect(withSerial.bundle.files).toEqual(without.bundle.files);
    expect(readFileSync(path.join(withSerial.dir, withSerial.tb), 'utf8')).toBe(readFileSync(path.join(without.dir, without.tb), 'utf8'));
  });
});

describe('serial-port validation (file:line:column)', () => {
  const brief = (ds: Diagnostic[]) => ds.filter((d) => d.severity === 'error').map((d) => `${d.code}@${d.line}:${d.column}`);
  const withSerial = (lines: string) => EXAMPLE.replace(/^serial:\n(?: {2}- .*\n)+/m, `serial:\n${lines}`);
  // The serial list starts on line 44 of the example; its first entry is line 45.
  it('a node that is not an input, an unknown node, a node listed twice and a node on two ports', () => {
    const r = loadDesign(withSerial(['  - { id: axes, inputs: [ax, wx, ax, nope] }', '  - { id: more, inputs: [ax] }', ''].join('\n')));
    expect(brief(r.diagnostics)).toEqual(['serial-port@45:30', 'serial-port@45:34', 'serial-port@45:38', 'serial-port@46:26']);
    const msgs = r.diagnostics.map((d) => d.message);
    expect(msgs[0]).toMatch(/`wx` is a `mul` node; serial port `axes` lists inputs/);
    expect(msgs[1]).toMatch(/listed twice in serial port `axes`/);
    expect(msgs[2]).toMatch(/nope/);
    expect(msgs[3]).toMatch(/already on serial port `axes`/);
  });

  it('an output on an input port, both directions, no nodes, an empty list, an id already taken', () => {
    const r = loadDesign(
      withSerial(
        [
          '  - { id: a1, inputs: [smooth] }',
          '  - { id: a2, inputs: [ax], outputs: [lean] }',
          '  - { id: a3 }',
          '  - { id: a4, outputs: [] }',
          '  - { id: ALU, inputs: [ay] }',
          '  - { id: a1, inputs: [az] }',
          '',
        ].join('\n'),
      ),
    );
    expect(brief(r.diagnostics)).toEqual([
      'serial-port@45:24',
      'serial-port@46:38',
      'serial-port@47:5',
      'serial-port@48:24',
      'serial-port@49:11',
      'serial-port@50:11',
    ]);
    expect(r.diagnostics[0].message).toMatch(/`smooth` is an `output` node/);
    expect(r.diagnostics[4].message).toMatch(/already used by unit/);
  });

  it('the schema: an unknown field of a port, and a port without id', () => {
    const r = loadDesign(withSerial(['  - { id: axes, inputs: [ax], order: slot }', '  - { inputs: [ay] }', ''].join('\n')));
    expect(brief(r.diagnostics).map((s) => s.split('@')[0])).toEqual(['schema-unknown-field', 'schema-required']);
  });
});
