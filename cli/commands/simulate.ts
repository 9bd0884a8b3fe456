// `pleat simulate DESIGN`: builds the folded datapath from the plan, runs it cycle by cycle on
// seeded random inputs and compares every output sample with the unfolded graph.
import { readFileSync, statSync, mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { InvalidArgumentError, Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { diagnosticLine } from '../format/common';
import type { Analysis, Design, Diagnostic } from '../../shared/types';
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

  const json = {
    format: 'pleat-simulation/1',
    tool: { name: 'pleat', version: ctx.version },
    file: loaded.file,
    simulation: report,
    control,
  };
  if (opts.output) {
    const out = path.resolve(process.cwd(), opts.output);
    try {
      mkdirSync(path.dirname(out), { recursive: true });
      writeFileSync(out, `${JSON.stringify(json, null, 2)}\n`);
    } catch (e) {
      throw new CliError(`cannot write ${opts.output}: ${(e as Error).message}`);
    }
  }
  if (opts.format === 'json') {
    process.stdout.write(`${JSON.stringify(json, null, 2)}\n`);
    return report.match ? 0 : 1;
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
  if (opts.tables) for (const line of controlText(control)) out.push(`  ${escapeControls(line)}`);
  process.stdout.write(`${out.join('\n')}\n`);
  return r.match ? 0 : 1;
}
