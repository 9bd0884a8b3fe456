// One plan or sweep, as a worker runs it: the design text in, the engine's answer out. No
// database here; server/jobs/worker.ts does the claiming, progress writes and cancel checks.
import type { CurrentPlan, JobParams, JobResult } from '../../shared/report/api';
import { loadDesign } from '../../shared/design/load';
import { evaluateDesign } from '../../shared/planning/index';
import { writeBack } from '../../shared/design/writeBack';
import type { Design, Unit } from '../../shared/types';
import { highsSolver } from '../../solvers/highs';
import type { PlanDesign, PlanProgress, SweepDesign } from './planningApi';

export interface Planner {
  planDesign: PlanDesign;
  sweepDesign: SweepDesign;
}

export class JobInputError extends Error {}

/**
 * Units for a plan: the design's units, with as many of each kind as asked. Kept units keep their
 * ids; new ones are named <first unit id of the kind without its digits><n>, continuing the
 * numbering (MUL1, MUL2 -> MUL3), with the stages of the design's unit of that kind.
 */
export function unitsFor(design: Design, counts: Record<string, number> | undefined): Unit[] {
  if (!counts) return design.units;
  const out: Unit[] = [];
  const kinds = new Set([...design.units.map((u) => u.kind), ...Object.keys(counts)]);
  const taken = new Set(design.units.map((u) => u.id));
  for (const kind of kinds) {
    const have = design.units.filter((u) => u.kind === kind);
    const want = counts[kind] ?? have.length;
    if (!design.kinds[kind]) throw new JobInputError(`the design has no operation kind \`${kind}\``);
    out.push(...have.slice(0, want));
    const stem = (have[0]?.id ?? kind.toUpperCase()).replace(/\d+$/, '');
    let n = 1;
    for (let i = have.length; i < want; i++) {
      while (taken.has(`${stem}${n}`)) n++;
      taken.add(`${stem}${n}`);
      out.push({ id: `${stem}${n}`, kind, stages: have[0]?.stages ?? 0 });
    }
  }
  return out;
}

/** The design's own plan, measured as the planner measures its plans, when its sets are complete. */
function currentPlan(text: string, design: Design): CurrentPlan | null {
  if (Object.keys(design.folding.sets).length === 0) return null;
  const base: CurrentPlan = { factor: design.folding.factor, units: design.units, sets: design.folding.sets, objective: null };
  const full = loadDesign(text);
  if (!full.design) return base;
  const scored = evaluateDesign(full.design);
  return { ...base, objective: scored.metrics };
}

export interface RunHooks {
  onProgress: (p: PlanProgress) => void;
  signal: { readonly aborted: boolean };
}

export async function runJob(planner: Planner, kind: 'plan' | 'sweep', params: JobParams, text: string, hooks: RunHooks): Promise<JobResult> {
  const loaded = loadDesign(text, { unplaced: 'allow', ...(kind === 'plan' && params.factor ? { factor: params.factor } : {}) });
  if (!loaded.design) {
    const first = loaded.diagnostics.find((d) => d.severity === 'error');
    const where = first?.line ? ` (line ${first.line}, column ${first.column})` : '';
    throw new JobInputError(`the design does not load${where}: ${first?.message ?? 'unknown problem'}`);
  }
  const design = loaded.design;
  const solver = highsSolver({ signal: hooks.signal });
  const common = { objective: params.objective, timeLimitSeconds: params.timeLimitSeconds, solver, onProgress: hooks.onProgress, signal: hooks.signal };
  if (kind === 'plan') {
    const units = unitsFor(design, params.units === 'auto' ? undefined : params.units);
    const plan = await planner.planDesign(design, { ...common, factor: design.folding.factor, units });
    const original = loadDesign(text, { unplaced: 'allow' }).design ?? design;
    const plannedText = plan.status === 'infeasible' ? null : plannedFile(text, plan);
    return { kind: 'plan', plan, current: currentPlan(text, original), plannedText };
  }
  const factors = params.factors ?? [];
  const rows = await planner.sweepDesign(design, { ...common, factors, units: params.units ?? 'auto' });
  return { kind: 'sweep', rows };
}

/** The design text with the plan written into it, every other byte kept (the one write-back, as pleat plan --write). */
function plannedFile(text: string, plan: { sets: Record<string, (string | null)[]>; factor: number; units: Unit[] }): string | null {
  try {
    return writeBack(text, { sets: plan.sets, factor: plan.factor, units: plan.units }).text;
  } catch {
    return null; // a layout the splice cannot edit: the job still shows the plan
  }
}
