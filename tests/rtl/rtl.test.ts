// The generated Verilog, checked by tools outside the project: Icarus Verilog (iverilog, vvp)
// runs the self-checking testbench, whose vectors come from the integer reference model, and
// Verilator lints the RTL with -Wall. Both are installed by scripts/ensure-hdl-tools.sh.
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execa } from 'execa';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { controlTables } from '../../shared/hardware/control';
import { resolveArithmetic } from '../../shared/hardware/reference';
import { generateRtl, generateTestbench, parallelDesign, testVectors, type RtlBundle } from '../../shared/hardware/rtl';
import type { ControlTables, Design } from '../../shared/types';
import { randomDesign } from '../sim/randomDesign';

const ROOT = path.resolve(__dirname, '../..');
const EXAMPLES = path.join(ROOT, 'examples');
// Our own fixture: retiming needed, one iteration of latency, a tap and a slotted output.
const FIXTURE = path.join(ROOT, 'tests/sim/fixtures/smoothing-retimed.fold.yaml');
const temps: string[] = [];

beforeAll(async () => {
  // The tests must not skip quietly in CI: without the tools they fail, saying why.
  const r = await execa('bash', [path.join(ROOT, 'scripts/ensure-hdl-tools.sh')], { reject: false, all: true });
  if (r.exitCode !== 0) {
    throw new Error(`the RTL tests need Icarus Verilog and Verilator, and scripts/ensure-hdl-tools.sh could not install them:\n${r.all}`);
  }
  for (const tool of ['iverilog', 'vvp', 'verilator']) {
    const w = await execa('sh', ['-c', `command -v ${tool}`], { reject: false });
    if (w.exitCode !== 0) throw new Error(`${tool} is not on the PATH after scripts/ensure-hdl-tools.sh`);
  }
}, 600_000);

afterAll(() => {
  for (const d of temps) rmSync(d, { recursive: true, force: true });
});

interface Built {
  bundle: RtlBundle;
  control: ControlTables;
  dir: string;
  tb: string;
}

function build(design: Design, opts: { iterations?: number; seed?: number; control?: ControlTables; topName?: string } = {}): Built {
  const control = opts.control ?? controlTables(design, analyze(design)).control!;
  const graph = resolveArithmetic(design).graph!;
  const bundle = generateRtl(design, control, { topName: opts.topName });
  const vectors = testVectors(design, graph, control, { iterations: opts.iterations ?? 24, seed: opts.seed ?? 11, fixed: bundle.fixed });
  const tb = generateTestbench(bundle, control, vectors);
  const dir = mkdtempSync(path.join(tmpdir(), 'pleat-rtl-'));
  temps.push(dir);
  for (const f of [...bundle.files, tb]) writeFileSync(path.join(dir, f.name), f.text);
  return { bundle, control, dir, tb: tb.name };
}

async function simulate(b: Built): Promise<string> {
  const files = b.bundle.files.map((f) => f.name);
  const c = await execa('iverilog', ['-g2001', '-o', 'sim.vvp', b.tb, ...files], { cwd: b.dir, reject: false, all: true });
  expect(c.exitCode, `iverilog:\n${c.all}`).toBe(0);
  const r = await execa('vvp', ['-n', 'sim.vvp'], { cwd: b.dir, reject: false, all: true });
  return String(r.all);
}

async function lint(b: Built): Promise<string> {
  const files = b.bundle.files.map((f) => f.name);
  const r = await execa('verilator', ['--lint-only', '-Wall', '--top-module', b.bundle.top, ...files], { cwd: b.dir, reject: false, all: true });
  return `${r.exitCode === 0 ? '' : `exit ${r.exitCode}\n`}${String(r.all).trim()}`;
}

async function expectBitExact(b: Built): Promise<void> {
  const out = await simulate(b);
  // The testbench's closing line; every sample of every output checked against the reference.
  expect(out, out).toMatch(new RegExp(`^PASS ${b.bundle.top}: \\d+ samples on \\d+ outputs, 0 mismatches$`, 'm'));
  expect(out).not.toMatch(/MISMATCH/);
}

function examples(): { file: string; design: Design }[] {
  return readdirSync(EXAMPLES)
    .filter((f) => f.endsWith('.fold.yaml'))
    .sort()
    .map((file) => ({ file, design: loadDesign(readFileSync(path.join(EXAMPLES, file), 'utf8')).design }))
    .filter((x): x is { file: string; design: Design } => x.design !== null)
    .filter((x) => analyze(x.design).retiming.feasible);
}

describe('RTL of a retimed plan', () => {
  it('smoothing-retimed: bit-exact with one iteration of latency; lint clean', async () => {
    const b = build(loadDesign(readFileSync(FIXTURE, 'utf8')).design!);
    expect(b.control.latencyAdded).toBe(1);
    expect(b.bundle.ports.filter((p) => p.direction === 'output').map((p) => [p.port, p.lag, p.firstStrobeCycle])).toEqual([
      ['y', 1, 6],
      ['z', 1, 8],
    ]);
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('RTL of ids that are not Verilog names', () => {
  it('awkward-names: ports renamed predictably, unused and unfed ports handled; lint clean and bit-exact', async () => {
    const b = build(loadDesign(readFileSync(path.join(ROOT, 'tests/sim/fixtures/awkward-names.fold.yaml'), 'utf8')).design!);
    expect(b.bundle.top).toBe('n_2nd_order_stage');
    expect(b.bundle.ports.map((p) => `${p.node}=${p.port}`)).toEqual([
      'in.a=in_a',
      'tb_cyc=tb_cyc',
      'module=module_',
      'y out=y_out',
      'pl_part=pl_part',
      'unfed=unfed',
    ]);
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('RTL of the example designs', () => {
  const list = examples();
  it('has examples with a feasible datapath', () => {
    expect(list.length).toBeGreaterThan(0);
  });
  for (const { file, design } of list) {
    // The >2,000-node generated example runs too: about 15 s in iverilog on two cores.
    it(`${file}: testbench passes bit-exact in Icarus Verilog; Verilator -Wall lint is clean`, async () => {
      const b = build(design);
      expect(await lint(b)).toBe('');
      await expectBitExact(b);
    }, 180_000);
  }
});

describe('RTL of random designs', () => {
  // A handful of small random plans: loops, retiming, held and slotted inputs, taps, 0-stage units.
  const seeds: number[] = [];
  for (let s = 3001; seeds.length < 6; s++) if (analyze(randomDesign(s, { maxOps: 6 }).design).retiming.feasible) seeds.push(s);
  for (const seed of seeds) {
    it(`random design ${seed}: bit-exact and lint-clean`, async () => {
      const { design, text } = randomDesign(seed, { maxOps: 6 });
      const b = build(design, { seed });
      expect(await lint(b), text).toBe('');
      const out = await simulate(b);
      expect(out, `${out}\n${text}`).toMatch(/^PASS .* 0 mismatches$/m);
    }, 120_000);
  }
});

describe('RTL with a combinational loop through multiplexers', () => {
  it('random design 43: two 0-stage units feed each other in different partitions; lint waived there only, still bit-exact', async () => {
    const { design, text } = randomDesign(43);
    const b = build(design, { seed: 43 });
    expect(b.bundle.warnings.join(' ')).toMatch(/combinational loop/);
    expect(await lint(b), text).toBe('');
    const out = await simulate(b);
    expect(out, `${out}\n${text}`).toMatch(/^PASS .* 0 mismatches$/m);
  }, 120_000);
});

describe('fully parallel RTL (the area reference)', () => {
  it('computes the same outputs as the folded plan and lints clean', async () => {
    const { design } = loadDesign(readFileSync(FIXTURE, 'utf8'));
    const par = parallelDesign(design!);
    expect(par.folding.factor).toBe(1);
    expect(par.units.length).toBe(design!.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output').length);
    const b = build(par, { topName: 'pressure_smoothing_parallel' });
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('the testbench can fail', () => {
  it('reports mismatches when the RTL does not follow the reference', async () => {
    const { design } = loadDesign(readFileSync(FIXTURE, 'utf8'));
    const good = controlTables(design!, analyze(design!)).control!;
    const bad: ControlTables = structuredClone(good);
    const m = bad.muxes.find((x) => x.sources.length > 1)!;
    const t = m.select.findIndex((s) => s !== null);
    m.select[t] = (m.select[t]! + 1) % m.sources.length;
    // RTL from the broken tables, vectors from the reference of the design.
    const b = build(design!, { control: bad });
    const out = await simulate(b);
    expect(out).toMatch(/^FAIL pressure_smoothing: [1-9]\d* mismatches/m);
    expect(out).toMatch(/MISMATCH [yz]: sample \d+ at cycle \d+: expected -?\d+, got -?\d+/);
  }, 120_000);
});
