// `pleat sweep DESIGN --factors 2..32`: for each folding factor N, the fewest units of each kind
// that admit a plan and the best plan found, with utilization, registers, multiplexer inputs,
// latency and sample period; marks the Pareto front over (units, registers, sample period).
import path from 'node:path';
import { Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { diagnosticLine } from '../format/common';
import { formatSweepText, sweepCsv, sweepJson, type SweepOutput } from '../format/sweep';
import type { PlanObjective } from '../plan/api';
import { factorList, kindCounts, kindsOf, operationsPerKind } from '../plan/units';
import { readForPlanning } from '../plan/read';
import { MAX_PLAN_FACTOR, OBJECTIVES, secondsOption } from './plan';

interface SweepCliOptions {
  factors: number[];
  units: 'auto' | Record<string, number>;
  stages?: Record<string, number>;
  objective: PlanObjective;
  timeLimit: number;
  format: 'text' | 'json' | 'csv';
  color: boolean;
}

export const DEFAULT_SWEEP_TIME_LIMIT = 10;

function unitsOption(value: string): 'auto' | Record<string, number> {
  return value.trim() === 'auto' ? 'auto' : kindCounts('COUNT', 0)(value);
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('sweep')
    .description('plan a design at each folding factor of a range: fewest units, registers, multiplexer inputs, latency, sample period, and the Pareto front')
    .argument('<design>', 'a design file (*.fold.yaml); its folding sets may be missing or partial')
    .requiredOption('--factors <range>', 'folding factors to try: 2..32, 4, 2,4,8 or a mix', factorList(MAX_PLAN_FACTOR))
    .option('-u, --units <auto|KIND=COUNT,...>', 'auto: the fewest units per kind that admit a plan at each N; or fixed counts per kind', unitsOption, 'auto')
    .option('--stages <KIND=S,...>', 'pipeline stages of the units the sweep makes (default: the design\'s unit of that kind)', kindCounts('S', 0))
    .addOption(new Option('--objective <what>', 'what to minimise first; the other two follow').choices(OBJECTIVES).default('registers'))
    .option('-t, --time-limit <seconds>', 'time for the search at each factor', secondsOption, DEFAULT_SWEEP_TIME_LIMIT)
    .addOption(new Option('-f, --format <format>', 'output format').choices(['text', 'json', 'csv']).default('text'))
    .option('--no-color', 'never colour the output')
    .addHelpText('after', '\nExit codes: 0 some factor admits a plan, 1 none does, 2 invalid design or command line. Progress goes to standard error when it is a terminal.')
    .action(async (file: string, opts: SweepCliOptions) => {
      process.exitCode = await runSweep(file, opts, ctx);
    });
};

export async function runSweep(file: string, opts: SweepCliOptions, ctx: CliContext): Promise<number> {
  const color = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env }));
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));
  const abs = path.resolve(process.cwd(), file);
  // Loaded at the largest factor, so that a file without `folding:` reads too and no pin is
  // refused for its partition; the sweep sets N itself (pins beyond a smaller N are noted).
  const read = await readForPlanning(abs, opts.factors[opts.factors.length - 1]);
  if (!read.design) {
    for (const d of read.diagnostics) {
      const line = diagnosticLine(read.file, d);
      process.stderr.write(`${d.severity === 'error' ? errColor.red(line) : errColor.yellow(line)}\n`);
    }
    const n = read.diagnostics.filter((d) => d.severity === 'error').length;
    throw new CliError(`${read.file} is not a valid design (${n} error${n === 1 ? '' : 's'})`);
  }
  const design = read.design;
  const known = kindsOf(design);
  for (const [option, given] of [['--units', opts.units === 'auto' ? {} : opts.units], ['--stages', opts.stages ?? {}]] as const) {
    for (const k of Object.keys(given)) {
      if (!known.has(k)) throw new CliError(`${option} names kind \`${k}\`, which the design ${design.name} does not use (its kinds: ${[...known].sort().join(', ')})`);
    }
  }
  const progress = process.stderr.isTTY ? (line: string) => process.stderr.write(`\r\x1b[2K${errColor.dim(line)}`) : null;
  const [{ loadPlanner }, { highsSolver }] = await Promise.all([import('../plan/engine'), import('../../solvers/highs')]);
  const planner = await loadPlanner();
  const rows = await planner.sweepDesign(design, {
    factors: opts.factors,
    units: opts.units,
    ...(opts.stages ? { stages: opts.stages } : {}),
    objective: opts.objective,
    // The engine shares its budget among the factors; the option is per factor.
    timeLimitSeconds: opts.timeLimit * opts.factors.length,
    solver: highsSolver(),
    onProgress: progress ? (p) => progress(`pleat sweep: ${p.phase}${p.total ? ` ${p.done ?? 0}/${p.total}` : ''}`) : undefined,
  });
  if (progress) process.stderr.write('\r\x1b[2K');
  // Columns in the order of the design's units, then any kind that only operations have.
  const kinds = [...new Set([...design.units.map((u) => u.kind), ...operationsPerKind(design).keys()])];
  for (const r of rows) for (const k of Object.keys(r.units)) if (!kinds.includes(k)) kinds.push(k);
  const out: SweepOutput = { file: read.file, name: design.name, clockNs: design.clockNs ?? null, kinds, rows };
  if (opts.format === 'json') process.stdout.write(sweepJson(out, ctx.version));
  else if (opts.format === 'csv') process.stdout.write(sweepCsv(out));
  else process.stdout.write(formatSweepText(out, color));
  return rows.some((r) => r.plan.status !== 'infeasible') ? 0 : 1;
}
