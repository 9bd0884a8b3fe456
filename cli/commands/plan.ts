// `pleat plan DESIGN...`: finds folding sets for designs whose sets are missing or partial (the
// entries already placed are pins), under a unit budget and a folding factor, exact by a
// mixed-integer model where it can be, and prints, writes back or saves the plan.
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { InvalidArgumentError, Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { expandPaths } from '../files';
import { entryExit, formatPlanText, planJson, type PlanEntry } from '../format/plan';
import type { PlanObjective } from '../plan/api';
import { budgetUnits, kindCounts } from '../plan/units';
import { checkPlanned, readForPlanning, shownPath } from '../plan/read';
import { intOption } from './simulate';

export const OBJECTIVES: PlanObjective[] = ['registers', 'muxes', 'latency'];
/** Largest --factor: far beyond what a unit budget of a real design asks for, small enough to plan. */
export const MAX_PLAN_FACTOR = 65_536;
export const DEFAULT_TIME_LIMIT = 30;

interface PlanCliOptions {
  factor?: number;
  units?: Record<string, number>;
  stages?: Record<string, number>;
  objective: PlanObjective;
  timeLimit: number;
  write?: boolean;
  out?: string;
  format: 'text' | 'json';
  color: boolean;
}

export function secondsOption(value: string): number {
  const n = Number(value);
  if (!/^\d+(\.\d+)?$/.test(value.trim()) || !(n > 0) || n > 86_400) throw new InvalidArgumentError(`expected seconds in (0, 86400], got "${value}"`);
  return n;
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('plan')
    .description('find folding sets (missing or partial in the file; placed entries are kept as pins) that need the fewest registers, then multiplexer inputs, then latency')
    .argument('<designs...>', 'design files (*.fold.yaml)')
    .option('-n, --factor <N>', 'folding factor (default: folding.factor of the design)', intOption(1, MAX_PLAN_FACTOR))
    .option('-u, --units <KIND=COUNT,...>', 'units per kind to plan on: made or dropped as needed (default: the design\'s units)', kindCounts('COUNT', 0))
    .option('--stages <KIND=S,...>', 'pipeline stages of the units that --units makes (default: the design\'s unit of that kind)', kindCounts('S', 0))
    .addOption(new Option('--objective <what>', 'what to minimise first; the other two follow').choices(OBJECTIVES).default('registers'))
    .option('-t, --time-limit <seconds>', 'time for the search per design', secondsOption, DEFAULT_TIME_LIMIT)
    .option('-w, --write', 'write the plan into the design file in place (only the edited lines change)')
    .option('-o, --out <file>', 'write the planned design file to FILE (one design only)')
    .addOption(new Option('-f, --format <format>', 'output format').choices(['text', 'json']).default('text'))
    .option('--no-color', 'never colour the output')
    .addHelpText('after', '\nExit codes: 0 a plan was found for every design, 1 no plan exists (or none within the time limit) for some design, 2 invalid design or command line.\nA plan is an engineering aid, not a sign-off; `pleat check` verifies the file it is written to.')
    .action(async (paths: string[], opts: PlanCliOptions) => {
      process.exitCode = await runPlan(paths, opts, ctx);
    });
};

export async function runPlan(paths: string[], opts: PlanCliOptions, ctx: CliContext): Promise<number> {
  if (opts.write && opts.out) throw new CliError('--write and --out exclude each other: write the plan into the design itself, or to another file');
  if (opts.stages && !opts.units) throw new CliError('--stages sets the pipeline stages of units that --units makes; give --units too');
  const cwd = process.cwd();
  const { files, problems } = await expandPaths(paths, cwd);
  if (problems.length) throw new CliError(problems.join('; '));
  if (opts.out && files.length !== 1) throw new CliError(`--out takes one design; ${files.length} were given`);
  const color = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env }));
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));
  const progress = process.stderr.isTTY ? (line: string) => process.stderr.write(`\r\x1b[2K${errColor.dim(line)}`) : null;

  const [{ loadPlanner }, { highsSolver }, { writeBack, WriteBackError }] = await Promise.all([
    import('../plan/engine'),
    import('../../solvers/highs'),
    import('../../shared/design/writeBack'),
  ]);
  const planner = await loadPlanner();
  const solver = highsSolver();
  const entries: PlanEntry[] = [];

  for (const abs of files) {
    const read = await readForPlanning(abs, opts.factor);
    const entry: PlanEntry = { file: read.file, name: read.name, status: 'error', plan: null, diagnostics: read.diagnostics, made: [], dropped: [], written: null };
    entries.push(entry);
    const design = read.design;
    if (!design || read.text === null) continue;

    let budget;
    try {
      budget = budgetUnits(design, opts.units ?? null, opts.stages ?? null);
    } catch (e) {
      if (!(e instanceof CliError)) throw e;
      entry.problem = e.message;
      continue;
    }
    entry.made = budget.made;
    entry.dropped = budget.dropped;
    // Pins on dropped units are refused above; pins on kept units stay in the design's sets.
    const kept = new Set(budget.units.map((u) => u.id));
    const planning = { ...design, folding: { ...design.folding, sets: Object.fromEntries(Object.entries(design.folding.sets).filter(([u]) => kept.has(u))) } };

    const plan = await planner.planDesign(planning, {
      factor: design.folding.factor,
      units: budget.units,
      objective: opts.objective,
      timeLimitSeconds: opts.timeLimit,
      solver,
      onProgress: progress ? (p) => progress(`pleat plan: ${read.file}: ${p.phase}${p.total ? ` ${p.done ?? 0}/${p.total}` : ''}`) : undefined,
    });
    if (progress) process.stderr.write('\r\x1b[2K');
    entry.plan = plan;
    entry.status = plan.status;
    if (plan.status === 'infeasible' || (!opts.write && !opts.out)) continue;

    // The planned file: the design's own text with the sets (and factor, units) spliced in.
    let text: string;
    let edited: { from: number; to: number; what: string }[];
    try {
      const changedUnits = budget.made.length > 0 || budget.dropped.length > 0;
      const r = writeBack(read.text, {
        sets: plan.sets,
        ...(opts.factor !== undefined ? { factor: plan.factor } : {}),
        ...(changedUnits ? { units: plan.units } : {}),
      });
      text = r.text;
      edited = r.edited;
    } catch (e) {
      if (!(e instanceof WriteBackError)) throw e;
      entry.status = 'error';
      entry.problem = `cannot write the plan into ${read.file}: ${e.message}`;
      continue;
    }
    // Never write a plan that `pleat check` would reject.
    const problem = await checkPlanned(text, plan);
    if (problem) {
      entry.status = 'error';
      entry.problem = `internal error: the plan was not written, because ${problem}; please report it`;
      continue;
    }
    const target = opts.out ? path.resolve(cwd, opts.out) : abs;
    try {
      if (opts.out) mkdirSync(path.dirname(target), { recursive: true });
      writeFileSync(target, text);
    } catch (e) {
      throw new CliError(`cannot write ${opts.out ?? read.file}: ${(e as Error).message}`);
    }
    entry.written = { file: shownPath(target), edited: opts.out ? [] : edited };
  }

  if (opts.format === 'json') process.stdout.write(planJson(entries, ctx.version));
  else process.stdout.write(formatPlanText(entries, color));
  const codes = entries.map(entryExit);
  return codes.includes(2) ? 2 : codes.includes(1) ? 1 : 0;
}
