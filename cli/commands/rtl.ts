// `pleat rtl DESIGN --out DIR`: writes the folded datapath as Verilog-2001 with a self-checking
// testbench; --verify runs it in Icarus Verilog, --area compares it with a fully parallel RTL in Yosys.
import { mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { infeasible, intOption, loadForHardware } from './simulate';
import { escapeControls, escapeControlsDeep, escapeTerminal } from '../format/escape';
import { synthesize, yosysVersion, type AreaFigures } from '../rtl/area';
import { HARDWARE_SUMMARY_FORMAT, HARDWARE_SUMMARY_VERSION, type HardwareSummary } from '../../shared/report/hardwareSummary';

export { parseYosysLtp, parseYosysStat, type AreaFigures } from '../rtl/area';

interface RtlOptions {
  out: string;
  width: number;
  coefFrac: number;
  iterations: number;
  seed: number;
  verify?: boolean;
  area?: boolean;
  force?: boolean;
  format: 'text' | 'json';
  color: boolean;
  interface: 'strobe' | 'stream';
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('rtl')
    .description('write the folded datapath as synthesizable Verilog-2001 with a self-checking testbench')
    .argument('<design>', 'a design file (*.fold.yaml)')
    .requiredOption('-o, --out <dir>', 'folder for the Verilog files, the testbench and <top>.rtl.json')
    .option('-w, --width <W>', 'default of the data width parameter W (and the testbench\'s width)', intOption(2, 64), 16)
    .option('--coef-frac <F>', 'fractional bits of the quantised coefficients', intOption(0, 60), 14)
    .option('-n, --iterations <K>', 'samples of every output the testbench checks', intOption(1, 100_000), 32)
    .option('-s, --seed <S>', 'seed of the testbench\'s random inputs', intOption(0, 2 ** 32 - 1), 1)
    .option('--verify', 'compile and run the testbench with Icarus Verilog (iverilog, vvp)')
    .option('--force', 'write into a folder that holds files Pleat did not write')
    .option('--area', 'synthesize the folded RTL and a pipelined parallel RTL of the same graph with Yosys; compare cells, flip-flops and logic depth, and write <top>.hardware.json')
    .addOption(new Option('--interface <kind>', 'strobe: timed ports with one-cycle valid strobes; stream: valid/ready handshakes, start/busy, a clock enable').choices(['strobe', 'stream']).default('strobe'))
    .addOption(new Option('-f, --format <format>', 'output format').choices(['text', 'json']).default('text'))
    .option('--no-color', 'never colour the output')
    .action(async (file: string, opts: RtlOptions) => {
      process.exitCode = await runRtl(file, opts, ctx);
    });
};

function tool(cmd: string, args: string[], cwd: string): { ok: boolean; out: string; missing: boolean } {
  const r = spawnSync(cmd, args, { cwd, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) return { ok: false, out: String(r.error.message), missing: (r.error as NodeJS.ErrnoException).code === 'ENOENT' };
  return { ok: r.status === 0, out: `${r.stdout ?? ''}${r.stderr ?? ''}`, missing: false };
}

function writeBundle(dir: string, files: { name: string; text: string }[]): void {
  mkdirSync(dir, { recursive: true });
  for (const f of files) writeFileSync(path.join(dir, f.name), f.text);
}

/**
 * What is in the output folder before writing: nothing, an earlier output of `pleat rtl` (a
 * `*.rtl.json` of format pleat-rtl/1 beside the files it lists), or other files. The usual
 * generators refuse to mix their output into a folder they did not make; so does Pleat, unless
 * --force (docs/cli.md).
 */
function outputFolderState(dir: string): { kind: 'absent' | 'empty' | 'earlier' | 'foreign' | 'not-a-folder'; earlier?: string } {
  let entries: string[];
  try {
    if (!statSync(dir).isDirectory()) return { kind: 'not-a-folder' };
    entries = readdirSync(dir);
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'ENOENT' ? { kind: 'absent' } : { kind: 'not-a-folder' };
  }
  if (entries.length === 0) return { kind: 'empty' };
  const known = new Set<string>();
  let earlier: string | undefined;
  for (const name of entries.filter((n) => n.endsWith('.rtl.json'))) {
    try {
      const j = JSON.parse(readFileSync(path.join(dir, name), 'utf8')) as { format?: unknown; files?: unknown; top?: unknown };
      if (j.format !== 'pleat-rtl/1' || !Array.isArray(j.files)) continue;
      earlier = name;
      known.add(name);
      for (const f of j.files) if (typeof f === 'string') known.add(f);
      if (typeof j.top === 'string') known.add(`${j.top}_tb.vvp`).add(`${j.top}.hardware.json`);
      known.add('parallel');
    } catch {
      /* not ours */
    }
  }
  if (earlier && entries.every((n) => known.has(n))) return { kind: 'earlier', earlier };
  return { kind: 'foreign' };
}

export async function runRtl(file: string, opts: RtlOptions, ctx: CliContext): Promise<number> {
  if (opts.out.trim() === '') throw new CliError('--out needs a folder name; `--out .` writes into the working folder');
  const color = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env }));
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));
  const loaded = await loadForHardware(file, errColor);
  const [{ controlTables }, rtl, { resolveArithmetic }] = await Promise.all([
    import('../../shared/hardware/control'),
    import('../../shared/hardware/rtl'),
    import('../../shared/hardware/reference'),
  ]);
  const built = controlTables(loaded.design, loaded.analysis, loaded.datapath);
  const { control } = built;
  if (!control) throw infeasible(loaded, built);
  const graph = resolveArithmetic(loaded.design).graph!;
  const [{ buildRtlOutput }, { formatPlan }, { locate }] = await Promise.all([
    import('../../shared/hardware/rtlFiles'),
    import('../../shared/hardware/formats'),
    import('../../shared/design/positions'),
  ]);
  const out = buildRtlOutput(loaded.design, loaded.file, graph, control, {
    width: opts.width, coefFrac: opts.coefFrac, iterations: opts.iterations, seed: opts.seed, interface: opts.interface, version: ctx.version,
  }, loaded.analysis.outputLatency);
  const { bundle, testbench: tb } = out;
  let narrow = out.narrow;
  try {
    narrow = locate(loaded.text, narrow);
  } catch {
    /* keep them without positions */
  }
  const generator = `pleat ${ctx.version}`;

  const dir = path.resolve(process.cwd(), opts.out);
  const before = outputFolderState(dir);
  if (before.kind === 'not-a-folder') throw new CliError(`cannot write to ${opts.out}: it is not a folder`);
  if (before.kind === 'foreign' && !opts.force) {
    throw new CliError(`${opts.out} already holds files that pleat rtl did not write; choose an empty or new folder, or pass --force to write into it anyway`);
  }
  const notices: string[] = [];
  if (before.kind === 'earlier') notices.push(`replacing the earlier output of pleat rtl in ${opts.out} (${before.earlier})`);
  else if (before.kind === 'foreign') notices.push(`--force: writing into ${opts.out}, which holds other files`);
  try {
    if (before.kind === 'earlier') {
      // The earlier output goes first, so no stale module of another top is left beside the new one.
      for (const name of readdirSync(dir)) rmSync(path.join(dir, name), { recursive: true, force: true });
    }
    writeBundle(dir, [...bundle.files, tb]);
  } catch (e) {
    throw new CliError(`cannot write to ${opts.out}: ${(e as Error).message}`);
  }

  let verify: { passed: boolean; summary: string } | null = null;
  if (opts.verify) {
    const sim = `${bundle.top}_tb.vvp`;
    const c = tool('iverilog', ['-g2001', '-o', sim, tb.name, ...bundle.files.map((f) => f.name)], dir);
    if (c.missing) throw new CliError('--verify needs Icarus Verilog on the PATH (Debian: apt-get install iverilog, or bash scripts/ensure-hdl-tools.sh)');
    if (!c.ok) throw new CliError(`iverilog could not compile the generated RTL: ${c.out.trim().split('\n').slice(0, 5).join(' ')}`);
    const run = tool('vvp', ['-n', sim], dir);
    const line = run.out.split('\n').find((l) => /^(PASS|FAIL) /.test(l)) ?? run.out.trim().split('\n').pop() ?? '';
    verify = { passed: /^PASS .* 0 mismatches/.test(line), summary: line.trim() };
  }

  let area: AreaRun | null = null;
  if (opts.area) {
    // The reference keeps every operation's pipeline stages (docs/rtl.md, "Does sharing pay?").
    const ref = rtl.parallelReference(loaded.design);
    if (!ref) throw new CliError('internal: the pipelined parallel graph has no datapath up to the folded factor');
    const parBundle = rtl.generateRtl(ref.design, ref.control, { width: opts.width, coefFrac: opts.coefFrac, generator, topName: `${bundle.top}_parallel` });
    const parDir = path.join(dir, 'parallel');
    writeBundle(parDir, parBundle.files);
    const scratch = mkdtempSync(path.join(tmpdir(), 'pleat-area-'));
    try {
      writeBundle(scratch, bundle.files);
      const folded = synthesize({ top: bundle.top, files: bundle.files.map((f) => f.name), dir: scratch });
      const parallel = synthesize({ top: parBundle.top, files: parBundle.files.map((f) => f.name), dir: parDir });
      area = { folded, parallel, tool: yosysVersion(dir), parallelFactor: ref.factor, parallelNote: ref.note };
    } finally {
      rmSync(scratch, { recursive: true, force: true });
    }
  }
  let summary: HardwareSummary | null = null;
  if (area) {
    summary = {
      format: HARDWARE_SUMMARY_FORMAT,
      version: HARDWARE_SUMMARY_VERSION,
      design: loaded.design.name,
      file: loaded.file,
      top: bundle.top,
      tool: area.tool,
      compared: { stages: 'folded', multipliers: 'general', width: bundle.fixed.width, coefFrac: bundle.fixed.coefFrac },
      folded: { cells: area.folded.cells, flipFlops: area.folded.registers, depth: area.folded.depth, factor: bundle.factor },
      parallel: { cells: area.parallel.cells, flipFlops: area.parallel.registers, depth: area.parallel.depth, factor: area.parallelFactor },
    };
    writeFileSync(path.join(dir, `${bundle.top}.hardware.json`), `${JSON.stringify(summary, null, 2)}\n`);
  }

  // Each output's latency and what forces the outputs' shared retiming (docs/analysis.md), as `pleat check` reports it.
  const latency = loaded.analysis.outputLatency;
  const report = {
    ...out.manifest,
    verify,
    area: area
      ? { tool: area.tool, compared: summary!.compared, summary: `${bundle.top}.hardware.json`, folded: { ...area.folded, factor: bundle.factor }, parallel: { ...area.parallel, factor: area.parallelFactor } }
      : null,
  };
  // Written in chunks: the manifest of a large plan (its control tables) outgrows one string.
  const { writeJsonFile, writeJson } = await import('../format/json');
  writeJsonFile(report, path.join(dir, `${bundle.top}.rtl.json`));
  const failed = verify !== null && !verify.passed;

  for (const n of notices) process.stderr.write(`${escapeTerminal(n)}\n`);
  if (opts.format === 'json') {
    writeJson(report, (chunk) => process.stdout.write(chunk));
    return failed ? 1 : 0;
  }
  const shownDir = path.relative(process.cwd(), dir) || '.';
  const lines: string[] = [];
  lines.push(`wrote ${report.files.length} Verilog files and ${bundle.top}.rtl.json to ${shownDir}/ (top module ${bundle.top}, W = ${bundle.fixed.width}, N = ${bundle.factor})`);
  if (formatPlan(loaded.design, opts.width).declared) lines.push(`number formats of the file; every port is a ${bundle.fixed.width}-bit signed word holding its signal's format sign-extended`);
  if (bundle.interface === 'stream') lines.push(`interface: stream (pulse ${bundle.start} once after reset; ${bundle.busy} is high while an iteration runs; every port has a valid/ready handshake):`);
  else lines.push('interface (cycle 0 = first cycle after the last rising edge of clk with rst high):');
  for (const p of bundle.ports) lines.push(`  ${p.direction === 'input' ? 'in ' : 'out'} ${p.port}: ${p.timing}`);
  // Node ids and the design name come from the file: escaped before colours are added.
  for (const r of escapeControlsDeep(bundle.renamed)) lines.push(`  renamed ${r.role === 'module' ? 'top module' : r.role === 'strobe' ? `strobe of ${r.of}` : `port of ${r.of}`}: ${r.wanted} -> ${r.name} (${r.reason})`);
  if (latency && loaded.analysis.retiming.needed) {
    const each = latency.outputs.map((o) => `${o.node} ${o.latency}`).join(', ');
    lines.push(escapeControls(`latency of the outputs in iterations: ${each}${latency.forcedBy ? `; ${latency.forcedBy.node} sets the shared retiming to ${latency.shared}, ${latency.forcedBy.by} above the others' need${latency.forcedBy.options.length ? `; to lower it: ${latency.forcedBy.options.join('; or ')}` : ''}` : ''}`));
  }
  for (const w of bundle.warnings) lines.push(`${color.yellow('warning')}: ${escapeControls(w)}`);
  for (const d of narrow) lines.push(`${color.yellow('warning')}: ${loaded.file}${d.line ? `:${d.line}:${d.column}` : ''}: ${escapeControls(d.message)} [${d.code}]`);
  if (out.overflows.length) {
    const n = out.overflows.reduce((a, o) => a + o.count, 0);
    const first = out.overflows[0];
    lines.push(`${color.yellow('warning')}: the test vectors overflow ${n} time${n === 1 ? '' : 's'} at ${out.overflows.length} node${out.overflows.length === 1 ? '' : 's'} (first ${escapeControls(first.node)}, iteration ${first.firstIteration}); the testbench checks the RTL against the same overflows, so PASS says the RTL matches its model, not that the numbers fit`);
  }
  if (verify) lines.push(`testbench: ${verify.passed ? color.green(verify.summary) : color.red(verify.summary || 'no PASS line')}`);
  if (area) {
    const pad = (s: string | number, n: number) => String(s).padStart(n);
    const depth = (f: AreaFigures) => (f.depth === null ? 'loop' : f.depth);
    lines.push(`area and timing (${area.tool}; synth to generic cells, units kept whole so every multiplier is a general one; depth = ltp -noff, levels of generic cells, not ns):`);
    lines.push(`  ${''.padEnd(18)}${pad('folded', 10)}${pad('parallel', 12)}`);
    lines.push(`  ${'cells'.padEnd(18)}${pad(area.folded.cells, 10)}${pad(area.parallel.cells, 12)}`);
    lines.push(`  ${'flip-flops'.padEnd(18)}${pad(area.folded.registers, 10)}${pad(area.parallel.registers, 12)}`);
    lines.push(`  ${'logic depth'.padEnd(18)}${pad(depth(area.folded), 10)}${pad(depth(area.parallel), 12)}`);
    lines.push(`  ${'cycles per sample'.padEnd(18)}${pad(bundle.factor, 10)}${pad(area.parallelFactor, 12)}`);
    lines.push(`  compared: one unit per operation with the pipeline stages of its folded unit, multipliers general on both sides; the parallel RTL is in ${shownDir}/parallel/, the summary in ${bundle.top}.hardware.json`);
    if (area.parallelNote) lines.push(`  parallel: ${area.parallelNote}`);
    if (area.folded.depth === null || area.parallel.depth === null) lines.push('  depth "loop": the netlist has a combinational loop (a false path through multiplexers), so it has no longest path');
  }
  lines.push('The RTL is a starting point: timing closure and sign-off verification remain the engineer\'s.');
  process.stdout.write(`${lines.join('\n')}\n`);
  return failed ? 1 : 0;
}

interface AreaRun {
  folded: AreaFigures;
  parallel: AreaFigures;
  tool: string;
  parallelFactor: number;
  parallelNote: string | null;
}
