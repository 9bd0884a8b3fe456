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
import { generateRtl, generateTestbench, parallelDesign, parallelReference, testVectors, type RtlBundle } from '../../shared/hardware/rtl';
import type { ControlTables, Design } from '../../shared/types';
import { randomDesignFile as randomDesign } from '../support/randomDesign';

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

function build(design: Design, opts: { iterations?: number; seed?: number; control?: ControlTables; topName?: string; stream?: boolean } = {}): Built {
  const control = opts.control ?? controlTables(design, analyze(design)).control!;
  const graph = resolveArithmetic(design).graph!;
  const bundle = generateRtl(design, control, { topName: opts.topName, ...(opts.stream ? { interface: 'stream' as const } : {}) });
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

describe('RTL with number formats per signal', () => {
  // Expected values come from the integer reference model with the same formats
  // (shared/hardware/formatArithmetic.ts), whose rounding and overflow modes are checked against
  // worked examples in tests/sim/fixedPoint.test.ts; Icarus Verilog runs the generated RTL.
  it('mixed-formats: every rounding and overflow mode, signed and unsigned formats, bit-exact while overflows happen; lint clean', async () => {
    const design = loadDesign(readFileSync(path.join(ROOT, 'tests/sim/fixtures/mixed-formats.fold.yaml'), 'utf8')).design!;
    const control = controlTables(design, analyze(design)).control!;
    const graph = resolveArithmetic(design).graph!;
    const vectors = testVectors(design, graph, control, { iterations: 40, seed: 5, fixed: { width: 16, coefFrac: 14 } });
    // The run must reach the saturating and wrapping paths, or the check proves little.
    expect(vectors.overflows.map((o) => o.node).sort()).toEqual(['g', 'm3', 'y2']);
    const b = build(design, { iterations: 40, seed: 5 });
    expect(b.bundle.fixed.width).toBe(16);
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);

  it('notch-biquad-q: a biquad in Q3.12 with convergent rounding and saturation; bit-exact and lint clean', async () => {
    const b = build(loadDesign(readFileSync(path.join(ROOT, 'tests/sim/fixtures/notch-biquad-q.fold.yaml'), 'utf8')).design!, { iterations: 64 });
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('the stream interface', () => {
  // The testbench offers inputs with random gaps and takes outputs with random stalls ($random,
  // seeded) and checks every sample in order against the integer reference; Icarus Verilog runs
  // it and Verilator lints the RTL with -Wall. The strobe RTL of the same designs is checked above.
  const designs: [string, Design][] = [
    ['smoothing-retimed', loadDesign(readFileSync(FIXTURE, 'utf8')).design!],
    ['mixed-formats', loadDesign(readFileSync(path.join(ROOT, 'tests/sim/fixtures/mixed-formats.fold.yaml'), 'utf8')).design!],
    ['awkward-names', loadDesign(readFileSync(path.join(ROOT, 'tests/sim/fixtures/awkward-names.fold.yaml'), 'utf8')).design!],
    ['sensor-frontend (a tap produced after the iteration ends)', loadDesign(readFileSync(path.join(EXAMPLES, 'sensor-frontend.fold.yaml'), 'utf8')).design!],
    ['butterfly-stage', loadDesign(readFileSync(path.join(EXAMPLES, 'butterfly-stage.fold.yaml'), 'utf8')).design!],
  ];
  for (const seed of [3001, 3004, 3006]) designs.push([`random design ${seed}`, randomDesign(seed, { maxOps: 6 }).design]);
  // N = 1: the parallel graph has no partition counter; every iteration waits for its inputs.
  designs.push(['the parallel graph of smoothing-retimed (N = 1)', parallelDesign(designs[0][1], { stages: 'none' })]);
  for (const [name, design] of designs) {
    it(`${name}: every sample arrives, in order and bit-exact, under random stalls on both sides; lint clean`, async () => {
      const b = build(design, { iterations: 20, stream: true });
      expect(b.bundle.interface).toBe('stream');
      expect(b.bundle.ports.every((p) => p.valid !== undefined && p.ready !== undefined)).toBe(true);
      expect(await lint(b)).toBe('');
      await expectBitExact(b);
    }, 120_000);
  }

  it('leaves the strobe interface as it was when not asked for', () => {
    const d = loadDesign(readFileSync(FIXTURE, 'utf8')).design!;
    const control = controlTables(d, analyze(d)).control!;
    const strobe = generateRtl(d, control);
    expect(strobe.interface).toBeUndefined();
    expect(generateRtl(d, control, { interface: 'strobe' }).files).toEqual(strobe.files);
    expect(strobe.files[0].text).not.toMatch(/_ready|pl_ce/);
  });
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
    const par = parallelDesign(design!, { stages: 'none' });
    expect(par.folding.factor).toBe(1);
    expect(par.units.length).toBe(design!.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output').length);
    const b = build(par, { topName: 'pressure_smoothing_parallel' });
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('the pipelined parallel reference (what --area compares)', () => {
  // Like with like (common practice in area/timing comparisons, no source): every operation of
  // the reference has as many pipeline stages as the unit that runs it in the folded plan.
  for (const file of [FIXTURE, path.join(EXAMPLES, 'equaliser-retimed.fold.yaml'), path.join(EXAMPLES, 'butterfly-stage.fold.yaml')]) {
    it(`${path.basename(file)}: same stages per operation as the folded plan, a datapath, bit-exact`, async () => {
      const { design } = loadDesign(readFileSync(file, 'utf8'));
      const ref = parallelReference(design!)!;
      expect(ref).not.toBeNull();
      const foldedStages = new Map<string, number>();
      for (const [unit, nodes] of Object.entries(design!.folding.sets)) {
        for (const n of nodes) if (n) foldedStages.set(n, design!.units.find((u) => u.id === unit)!.stages);
      }
      const ops = design!.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output');
      expect(ref.design.units.length).toBe(ops.length);
      for (const op of ops) {
        const [unit] = Object.entries(ref.design.folding.sets).find(([, nodes]) => nodes.includes(op.id))!;
        expect(ref.design.units.find((u) => u.id === unit)!.stages, op.id).toBe(foldedStages.get(op.id));
        // The control tables (and so the unit modules) carry the same latency.
        expect(ref.control.units.find((u) => u.unit === unit)!.stages, op.id).toBe(foldedStages.get(op.id));
      }
      // The factor is the smallest with a datapath, never above the folded plan's.
      expect(ref.factor).toBeLessThanOrEqual(design!.folding.factor);
      if (ref.factor > 1) expect(parallelReference(design!, { maxFactor: ref.factor - 1 })).toBeNull();
      const b = build(ref.design, { control: ref.control, topName: 'pipelined_parallel' });
      expect(await lint(b)).toBe('');
      await expectBitExact(b);
    }, 120_000);
  }
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

// ---------------------------------------------------------------- names and exact coefficients

/** A small feasible plan of our own: y = g * x (gain), with extra nodes given by the caller. */
function gainPlan(opts: { name?: string; coefficient?: string; input?: string; extraInput?: string } = {}): string {
  const x = opts.input ?? 'x';
  return `format: pleat/1
name: ${opts.name ?? 'gain-plan'}
units: [{ id: MUL, kind: mul, stages: 1 }, { id: ADD, kind: add, stages: 0 }]
nodes:
  - { id: ${x}, kind: input }
${opts.extraInput ? `  - { id: ${opts.extraInput}, kind: input }\n` : ''}  - { id: g, kind: mul, coefficient: ${opts.coefficient ?? '0.75'} }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: ${x}, to: g }
  - { from: g, to: s }
  - { from: ${opts.extraInput ?? x}, to: s }
  - { from: s, to: y }
folding: { factor: 2, sets: { MUL: [g], ADD: [~, s] } }
`;
}

describe('coefficients quantised from the decimal in the file', () => {
  // 0.500030517578125 = 0.5 + 2^-15 is exactly 8192.5 / 2^14, a rounding tie at F = 14; the
  // coefficient below lies 10^-20 under it. Its nearest double is the tie itself (the gap is far
  // below half an ulp), so quantising the double would give 8193 instead of 8192.
  const TEXT = '0.50003051757812499999';

  it('keeps the source text and rounds the exact decimal, not the double', () => {
    const design = loadDesign(gainPlan({ coefficient: TEXT })).design!;
    const g = design.nodes.find((n) => n.id === 'g')!;
    expect(g.coefficient).toBe(0.500030517578125); // what a double can hold (IEEE 754, common practice)
    expect(g.coefficientText).toBe(TEXT);
    // Independent reference, by hand with BigInt: round(c * 2^14), ties away from zero, where
    // c = 50003051757812499999 / 10^20. The remainder against half a unit decides.
    const num = 50003051757812499999n * 16384n;
    const den = 10n ** 20n;
    const floor = num / den;
    const expected = 2n * (num - floor * den) >= den ? floor + 1n : floor;
    expect(expected).toBe(8192n);
    const b = build(design);
    expect(b.bundle.coefficients).toEqual([{ node: 'g', value: 0.500030517578125, text: TEXT, quantised: expected.toString() }]);
  });

  it('short decimals keep no text: the double already is that decimal', () => {
    const design = loadDesign(gainPlan({ coefficient: '0.1' })).design!;
    expect(design.nodes.find((n) => n.id === 'g')!.coefficientText).toBeUndefined();
  });

  it('the RTL with that constant is lint clean and bit-exact against the reference', async () => {
    const b = build(loadDesign(gainPlan({ coefficient: TEXT })).design!);
    expect(readFileSync(path.join(b.dir, `${b.bundle.top}.v`), 'utf8')).toContain(`g: ${TEXT} ~ 8192 / 2^14`);
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);
});

describe('RTL names that collide', () => {
  it('an input named like an output strobe: the strobe is renamed, reported, and the testbench follows it', async () => {
    const b = build(loadDesign(gainPlan({ extraInput: 'y_valid' })).design!);
    const y = b.bundle.ports.find((p) => p.node === 'y')!;
    expect(y.valid).toBe('y_valid_2');
    expect(b.bundle.renamed).toContainEqual({ role: 'strobe', of: 'y', wanted: 'y_valid', name: 'y_valid_2', reason: '`y_valid` is already the port of input y_valid' });
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);

  it('a design named like one of its ports: the top module is renamed (Verilator refuses a signal named like its module)', async () => {
    const b = build(loadDesign(gainPlan({ name: 'x' })).design!);
    expect(b.bundle.top).toBe('x_top');
    expect(b.bundle.renamed).toContainEqual({ role: 'module', of: 'x', wanted: 'x', name: 'x_top', reason: '`x` is the port of input x' });
    expect(await lint(b)).toBe('');
    await expectBitExact(b);
  }, 120_000);

  it('a design named like a unit module signal (y) or an internal name (pl_part) stays apart from them', async () => {
    for (const [name, top] of [
      ['y', 'y_top'],
      ['pl_part', 'top_pl_part'],
    ]) {
      const b = build(loadDesign(gainPlan({ name })).design!);
      expect(b.bundle.top).toBe(top);
      expect(await lint(b), name).toBe('');
    }
  }, 120_000);

  it('a 1,500-character design name is refused by the schema; the RTL bounds module and file names anyway', () => {
    const long = 'n'.repeat(1500);
    const r = loadDesign(gainPlan({ name: long }));
    expect(r.design).toBeNull();
    expect(r.diagnostics[0]).toMatchObject({ code: 'schema-value', line: 2 });
    expect(r.diagnostics[0].message).toMatch(/1500 characters long; the limit is 200/);
    // A design object built elsewhere (not through the loader) still gets names a file system takes.
    const design = { ...loadDesign(gainPlan()).design!, name: long };
    design.units = design.units.map((u) => ({ ...u, id: u.id === 'MUL' ? 'M'.repeat(1500) : u.id }));
    design.folding = { ...design.folding, sets: { ['M'.repeat(1500)]: ['g'], ADD: [null, 's'] } };
    const control = controlTables(design, analyze(design)).control!;
    const bundle = generateRtl(design, control);
    expect(bundle.top.length).toBeLessThanOrEqual(48);
    for (const f of bundle.files) expect(Buffer.byteLength(f.name), f.name).toBeLessThanOrEqual(255); // NAME_MAX of Linux, common practice
    expect(bundle.renamed.find((r) => r.role === 'module')?.reason).toMatch(/longer than 48 characters/);
  });
});
