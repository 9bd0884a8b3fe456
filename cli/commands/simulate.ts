// `pleat simulate DESIGN`: builds the folded datapath from the plan, runs it cycle by cycle on
// seeded random inputs and compares every output sample with the unfolded graph.
import { readFileSync, statSync, mkdirSync } from 'node:fs';
import path from 'node:path';
import { InvalidArgumentError, Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { diagnosticLine } from '../format/common';
import type { Analysis, Design, Diagnostic, SimulationRuleName, SimulationRules } from '../../shared/types';
import type { SimulationReport } from '../../shared/hardware/foldedSim';
import type { FoldedDatapath } from '../../shared/analysis/analyze';
import { decodeDesignBytes, formatBytes } from '../../shared/design/encoding';
import { escapeControls, escapeControlsDeep } from '../format/escape';

/** A design read, validated and analysed, or a CliError already explaining why not. */
export interface LoadedDesign {
  file: string;
  text: string;
  design: Design;
  analysis: Analysis;
  /** The folded datapath the analysis chose, for the control tables; null when none exists. */
  datapath: FoldedDatapath | null;
}

export function intOption(min: number, max: number) {
  return (value: string): number => {
    if (!/^-?\d+$/.test(value.trim())) throw new InvalidArgumentError(`expected an integer, got "${value}"`);
    const n = Number(value);
    if (n < min || n > max) throw new InvalidArgumentError(`expected ${min}..${max}, got ${n}`);
    return n;
  };
}

/**
 * Reads one design file for simulate and rtl: prints its diagnostics (file:line:column) and
 * throws exit 2 when it is invalid or cannot be evaluated (an operation without arithmetic).
 */
export async function loadForHardware(fileArg: string, errColor: ReturnType<typeof makeChalk>): Promise<LoadedDesign> {
  const abs = path.resolve(process.cwd(), fileArg);
  const shown = path.relative(process.cwd(), abs).split(path.sep).join('/') || fileArg;
  const [{ loadDesign, DEFAULT_LIMITS }, { runDesignModel }, { locate }, { resolveArithmetic }] = await Promise.all([
    import('../../shared/design/load'),
    import('../../shared/pipeline'),
    import('../../shared/design/positions'),
    import('../../shared/hardware/reference'),
  ]);
  let text: string;
  try {
    const s = statSync(abs);
    if (!s.isFile()) throw new CliError(`not a design file: ${fileArg}`);
    if (s.size > DEFAULT_LIMITS.maxBytes) throw new CliError(`${shown}: the file is ${formatBytes(s.size)}; the limit is ${formatBytes(DEFAULT_LIMITS.maxBytes)}`);
    const decoded = decodeDesignBytes(readFileSync(abs));
    if (decoded.text === null) throw new CliError(`${diagnosticLine(shown, decoded.diagnostic)}`);
    text = decoded.text;
  } catch (e) {
    if (e instanceof CliError) throw e;
    throw new CliError(`cannot read ${fileArg}: ${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'no such file' : (e as Error).message}`);
  }
  const print = (ds: Diagnostic[]) => {
    for (const d of ds) {
      const line = diagnosticLine(shown, d);
      process.stderr.write(`${d.severity === 'error' ? errColor.red(line) : errColor.yellow(line)}\n`);
    }
  };
  const loaded = loadDesign(text);
  const errors = loaded.diagnostics.filter((d) => d.severity === 'error');
  if (!loaded.design || errors.length) {
    print(errors);
    throw new CliError(`${shown} is not a valid design (${errors.length} error${errors.length === 1 ? '' : 's'})`);
  }
  const { diagnostics } = resolveArithmetic(loaded.design);
  if (diagnostics.length) {
    let located = diagnostics;
    try {
      located = locate(text, diagnostics);
    } catch {
      /* keep them without positions */
    }
    print(located);
    throw new CliError(`${shown} cannot be evaluated: ${diagnostics.length} node${diagnostics.length === 1 ? '' : 's'} without usable arithmetic`);
  }
  // The engine's pipeline, with the control tables whole: simulation and RTL need every register.
  // The engine's pipeline; the command builds the control tables whole from its datapath.
  const run = runDesignModel(loaded.design, shown, { withControl: false });
  return { file: shown, text, design: loaded.design, analysis: run.analysis!, datapath: run.datapath };
}

/** Exit 1 with the retiming conflict in a line, when the plan has no folded datapath. */
export function infeasible(loaded: LoadedDesign, result?: { tooLarge?: boolean; reason?: string }): CliError {
  if (result?.tooLarge) return new CliError(`${loaded.file}: the folded datapath is too large to build: ${result.reason}`, 1);
  const c = loaded.analysis.retiming.conflict;
  const loop = c ? ` (loop ${c.edges.map((e) => e.from).join(' -> ')} -> ${c.edges[0]?.from ?? ''})` : '';
  return new CliError(
    `${loaded.file}: the plan has no feasible folded datapath: no retiming makes every folded delay nonnegative${loop}; \`pleat check\` explains the conflict`,
    1,
  );
}

interface SimulateOptions {
  iterations: number;
  seed: number;
  arithmetic: 'exact' | 'fixed';
  width: number;
  coefFrac: number;
  format: 'text' | 'json';
  output?: string;
  tables?: boolean;
  color: boolean;
  maxOverflows?: number;
  minSqnrDb?: number;
}

/** A number in dB for --min-sqnr-db. */
function dbOption(value: string): number {
  const n = Number(value);
  if (value.trim() === '' || !Number.isFinite(n) || n < -1000 || n > 1000) throw new InvalidArgumentError(`expected a number of dB from -1000 to 1000, got "${value}"`);
  return n;
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('simulate')
    .description('build the folded datapath of a design, run it on seeded random inputs and compare it with the unfolded graph')
    .argument('<design>', 'a design file (*.fold.yaml)')
    .option('-n, --iterations <K>', 'samples of every output to compare', intOption(1, 1_000_000), 64)
    .option('-s, --seed <S>', 'seed of the random input streams', intOption(0, 2 ** 32 - 1), 1)
    .addOption(new Option('-a, --arithmetic <kind>', 'exact: exact decimals; fixed: the RTL\'s W-bit two\'s complement').choices(['exact', 'fixed']).default('exact'))
    .option('-w, --width <W>', 'data width of --arithmetic fixed', intOption(2, 64), 16)
    .option('--coef-frac <F>', 'fractional bits of the coefficients in --arithmetic fixed', intOption(0, 60), 14)
    .option('-t, --tables', 'also print the control tables (multiplexers, registers, outputs)')
    .addOption(new Option('-f, --format <format>', 'output format').choices(['text', 'json']).default('text'))
    .option('-o, --output <file>', 'also write the JSON result to FILE')
    .option('--max-overflows <n>', 'fail (exit 1) past n fixed-point overflows (rule max_overflows)', intOption(0, 2_147_483_647))
    .option('--min-sqnr-db <dB>', 'fail (exit 1) when an output of a fixed run has a lower SQNR (rule min_sqnr_db)', dbOption)
    .option('--no-color', 'never colour the output')
    .action(async (file: string, opts: SimulateOptions) => {
      process.exitCode = await runSimulate(file, opts, ctx);
    });
};

export async function runSimulate(file: string, opts: SimulateOptions, ctx: CliContext): Promise<number> {
  const color = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env }));
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));
  const loaded = await loadForHardware(file, errColor);
  const [{ controlTables, controlText }, { simulateDesign }] = await Promise.all([import('../../shared/hardware/control'), import('../../shared/hardware/foldedSim')]);
  const built = controlTables(loaded.design, loaded.analysis, loaded.datapath);
  const { control } = built;
  if (!control) throw infeasible(loaded, built);
  const { report, diagnostics } = simulateDesign(loaded.design, { ...loaded.analysis, control }, {
    iterations: opts.iterations,
    seed: opts.seed,
    arithmetic: opts.arithmetic,
    fixed: { width: opts.width, coefFrac: opts.coefFrac },
  });
  if (!report) throw new CliError(diagnostics.map((d) => d.message).join('; '));
  const gates = await simulationGates(opts, report);

  const json = {
    format: 'pleat-simulation/1',
    tool: { name: 'pleat', version: ctx.version },
    file: loaded.file,
    simulation: report,
    gates,
    control,
  };
  // Written in chunks, as pleat rtl's manifest: the control tables of a large plan outgrow one string.
  const { writeJsonFile, writeJson } = await import('../format/json');
  if (opts.output) {
    const out = path.resolve(process.cwd(), opts.output);
    try {
      mkdirSync(path.dirname(out), { recursive: true });
      writeJsonFile(json, out);
    } catch (e) {
      throw new CliError(`cannot write ${opts.output}: ${(e as Error).message}`);
    }
  }
  if (opts.format === 'json') {
    writeJson(json, (chunk) => process.stdout.write(chunk));
    return report.match && gates.every((g) => g.passed) ? 0 : 1;
  }

  // Ids and the path come from the file: escaped before colours are added (cli/format/escape.ts).
  const r = escapeControlsDeep(report);
  const shownFile = escapeControls(loaded.file);
  const N = r.factor;
  const out: string[] = [];
  out.push(
    r.match
      ? `${color.green('match')}  ${shownFile} (${r.design}): the folded datapath computes what the unfolded graph computes`
      : `${color.red('MISMATCH')}  ${shownFile} (${r.design}): the folded datapath differs from the unfolded graph`,
  );
  const arith = r.arithmetic === 'exact' ? 'exact decimals' : `fixed point, W = ${r.fixed!.width}, ${r.fixed!.coefFrac} coefficient fraction bits`;
  out.push(`  compared ${r.samplesPerOutput} sample${r.samplesPerOutput === 1 ? '' : 's'} of each of ${r.outputs.length} output${r.outputs.length === 1 ? '' : 's'} (${r.samplesCompared} in all): ${r.hardwareIterations} iterations, ${r.cycles} cycles; ${arith}; seed ${r.seed}`);
  out.push(`  N = ${N}; retiming adds ${r.latencyAdded} iteration${r.latencyAdded === 1 ? '' : 's'} of latency; ${control.registers} register${control.registers === 1 ? '' : 's'} (${control.allocationSource === 'analysis' ? 'forward-backward allocation of the analysis' : 'allocation of the control tables'})`);
  for (const o of r.outputs) {
    const lag = o.lag === 0 ? 'sample l' : o.lag > 0 ? `sample l - ${o.lag}` : `sample l + ${-o.lag}`;
    out.push(`  ${o.node}: ${o.mode === 'tap' ? 'tap' : o.mode === 'slot' ? 'slot' : 'unfed'}; iteration l shows ${lag}; sample ${o.firstSample}+k valid in cycle ${o.firstStrobeCycle}+${N}k`);
  }
  if (r.note) out.push(`  ${color.yellow('note')}: ${r.note}`);
  if (r.firstMismatch) {
    const m = r.firstMismatch;
    out.push(`  first mismatch: output ${m.output}, sample ${m.sample} (iteration ${m.iteration}, cycle ${m.cycle}): expected ${m.expected}, got ${m.actual}`);
  }
  out.push(...fixedPointLines(r, color));
  for (const g of gates) out.push(`  ${g.passed ? color.green('rule') : color.red('RULE FAILED')} ${g.rule}: ${g.message}`);
  if (opts.tables) for (const line of controlText(control)) out.push(`  ${escapeControls(line)}`);
  process.stdout.write(`${out.join('\n')}\n`);
  return r.match && gates.every((g) => g.passed) ? 0 : 1;
}

interface Gate {
  rule: SimulationRuleName;
  source: 'option' | 'repository';
  limit: number;
  actual: number | null;
  passed: boolean;
  message: string;
}

/** The rules max_overflows and min_sqnr_db: from the options, else from the rules of pleat.config.yaml. */
async function simulationGates(opts: SimulateOptions, r: SimulationReport): Promise<Gate[]> {
  let fromConfig: SimulationRules = {};
  const { findConfig, loadConfig } = await import('../config');
  const file = findConfig(process.cwd());
  if (file) {
    const loaded = await loadConfig(file);
    if (loaded.config) fromConfig = loaded.config.rules as SimulationRules;
  }
  const gates: Gate[] = [];
  const maxOv = opts.maxOverflows ?? fromConfig.max_overflows;
  if (maxOv !== undefined) {
    const n = r.fixedPoint.overflowCount;
    const what = r.fixedPoint.overflowKind === 'fixed-overflow' ? 'fixed-point overflows' : 'exact values outside their format';
    gates.push({ rule: 'max_overflows', source: opts.maxOverflows !== undefined ? 'option' : 'repository', limit: maxOv, actual: n, passed: n <= maxOv, message: `${n} ${what}, at most ${maxOv} allowed` });
  }
  const minDb = opts.minSqnrDb ?? fromConfig.min_sqnr_db;
  if (minDb !== undefined) {
    const source = opts.minSqnrDb !== undefined ? 'option' : 'repository';
    if (!r.fixedPoint.accuracy) {
      gates.push({ rule: 'min_sqnr_db', source, limit: minDb, actual: null, passed: false, message: 'needs --arithmetic fixed: an exact run has no quantisation noise to measure' });
    } else {
      // An output without error (null) has infinite SQNR.
      const worst = r.fixedPoint.accuracy.reduce<{ node: string; db: number } | null>((w, a) => (a.sqnrDb !== null && (!w || a.sqnrDb < w.db) ? { node: a.node, db: a.sqnrDb } : w), null);
      const passed = worst === null || worst.db >= minDb;
      gates.push({ rule: 'min_sqnr_db', source, limit: minDb, actual: worst ? round2(worst.db) : null, passed, message: worst ? `lowest SQNR ${round2(worst.db)} dB (output ${worst.node}), at least ${minDb} dB required` : `no output has quantisation error, at least ${minDb} dB required` });
    }
  }
  return gates;
}

const round2 = (x: number) => Math.round(x * 100) / 100;

/** The fixed-point findings in lines: formats, bit growth, overflows, accuracy against the exact model. */
function fixedPointLines(r: SimulationReport, color: ReturnType<typeof makeChalk>): string[] {
  const fp = r.fixedPoint;
  const out: string[] = [];
  const narrow = fp.growth.signals.filter((x) => x.tooNarrow);
  const how = fp.growth.method === 'impulse-response' ? 'impulse responses' : fp.growth.method === 'interval' ? 'interval arithmetic' : 'no bound';
  out.push(`  number formats: ${fp.declared ? 'as the file gives them' : `none in the file: every signal Q${(r.fixed?.width ?? 16) - 1}.0 (the data width), truncate, wrap`}`);
  if (fp.growth.method === 'none') out.push(`  ${color.yellow('bit growth')}: no worst-case bound (${fp.growth.reason})`);
  else if (narrow.length === 0) out.push(`  bit growth (${how}): every signal's worst case fits its format`);
  else {
    const shown = narrow.slice(0, 6).map((x) => `${x.node} needs ${Number.isFinite(x.neededInt) ? `${x.format.startsWith('U') ? 'UQ' : 'Q'}${x.neededInt}.${x.format.split('.')[1]}` : 'a signed format'} (has ${x.format})`);
    out.push(`  ${color.yellow('bit growth')} (${how}): ${narrow.length} signal${narrow.length === 1 ? '' : 's'} can exceed ${narrow.length === 1 ? 'its' : 'their'} format: ${shown.join(', ')}${narrow.length > 6 ? ', ...' : ''}`);
  }
  if (fp.overflowCount === 0) out.push(`  overflows: none${fp.overflowKind === 'exact-out-of-range' ? ' (no exact value left its format)' : ''}`);
  else {
    const first = fp.overflows[0];
    const what = fp.overflowKind === 'fixed-overflow' ? 'fixed-point overflows' : 'exact values outside their format (a fixed-point datapath would overflow there)';
    const at = first.firstCycle !== null ? `cycle ${first.firstCycle}, iteration ${first.firstIteration}` : `iteration ${first.firstIteration}`;
    out.push(`  ${color.yellow('overflow')}: ${fp.overflowCount} ${what} at ${fp.overflows.length} node${fp.overflows.length === 1 ? '' : 's'}; first at ${first.node} (${first.format}), ${at}`);
  }
  for (const a of fp.accuracy ?? []) {
    out.push(`  ${a.node} against the exact model: max error ${a.maxError.toPrecision(4)} (${a.maxErrorLsb.toPrecision(3)} LSB of ${a.format}), SQNR ${a.sqnrDb === null ? 'infinite (no error)' : `${a.sqnrDb.toFixed(1)} dB`} over ${a.samples} samples`);
  }
  return out;
}
