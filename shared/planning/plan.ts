// Method: bounds first, then the exact mixed-integer model (shared/planning/exact.ts) when a solver is
// injected and the design is small, else or after a timeout the heuristic (shared/planning/heuristic.ts).
// Convention: every returned plan is re-scored by the engine (evaluate.ts); status and gap refer to the primary objective.
import type { Design } from '../types';
import { buildProblem, setsFromAssignment, designWithSets } from './problem';
import { planBounds } from './bounds';
import { heuristicPlan } from './heuristic';
import { compareMetrics, evaluateDesign, primary, type Evaluation } from './evaluate';
import { exactPlan } from './exact';
import type { PlanMetrics, PlanOptions, PlanResult } from './types';

/** Largest design (operations) given to the exact model by default; measured in docs/planning.md. */
export const EXACT_MAX_OPERATIONS = 40;

export function gapPercent(value: number, bound: number): number {
  if (value <= bound) return 0;
  if (value === 0) return 0;
  return Math.round((10000 * (value - bound)) / Math.abs(value)) / 100;
}

export async function planDesign(design: Design, options: PlanOptions): Promise<PlanResult> {
  const now = options.now ?? (() => Date.now());
  const t0 = now();
  const deadline = t0 + Math.max(0, options.timeLimitSeconds) * 1000;
  const p = buildProblem(design, options.factor, options.units);
  const notes: string[] = [];
  if (p.droppedPins.length) {
    notes.push(`not kept as pins (their unit is not planned on, or their slot is not below N): ${p.droppedPins.slice(0, 10).join(', ')}${p.droppedPins.length > 10 ? ` and ${p.droppedPins.length - 10} more` : ''}`);
  }
  const base = {
    factor: options.factor,
    units: options.units.map((u) => ({ ...u })),
    pins: p.pins.slice(),
  };
  const seconds = () => Math.round(now() - t0) / 1000;
  options.onProgress?.({ phase: 'bounds' });
  const bounds = planBounds(p);
  if (!bounds.feasibleByBounds) {
    return {
      ...base,
      status: 'infeasible',
      method: 'bounds: no plan can exist at this N with these units',
      sets: {},
      objective: null,
      bound: null,
      gapPercent: null,
      reasons: bounds.reasons,
      suggestion: bounds.suggestion,
      seconds: seconds(),
      notes,
    };
  }

  const objective = options.objective;
  let best: { sets: Record<string, (string | null)[]>; metrics: PlanMetrics; method: string } | null = null;
  let bound: Partial<PlanMetrics> = { registers: bounds.registers };
  if (objective === 'muxes') bound = { ...bound, muxInputs: 0 };
  let provenOptimal = false;

  // The heuristic always runs first: it gives the exact model a starting point and a horizon.
  const heuristicShare = options.solver && p.ops.length <= (options.exactMaxOperations ?? EXACT_MAX_OPERATIONS) ? 0.25 : 1;
  const h = heuristicPlan(p, {
    objective,
    now,
    deadline: t0 + (deadline - t0) * heuristicShare,
    signal: options.signal,
    onProgress: options.onProgress,
  });
  notes.push(...h.notes);
  let scored: Evaluation | null = null;
  if (h.assignment) {
    const sets = setsFromAssignment(p, h.assignment.unitOf, h.assignment.slotOf);
    let metrics = h.metrics;
    if (!metrics) {
      scored = evaluateDesign(designWithSets(design, options.factor, options.units, sets));
      metrics = scored.metrics;
    }
    if (metrics) best = { sets, metrics, method: h.method };
  }

  if (options.solver && p.ops.length <= (options.exactMaxOperations ?? EXACT_MAX_OPERATIONS) && !options.signal?.aborted) {
    options.onProgress?.({ phase: 'exact model' });
    const ex = await exactPlan(p, {
      objective,
      solver: options.solver,
      timeLimitSeconds: Math.max(0, (deadline - now()) / 1000),
      incumbent: best ? best.metrics : null,
      incumbentSets: best ? best.sets : null,
      now,
      deadline,
      signal: options.signal,
    });
    notes.push(...ex.notes);
    // The method names what found the plan: the model only when its own plan is returned.
    if (ex.foundByModel && ex.sets && ex.metrics && (!best || compareMetrics(ex.metrics, best.metrics, objective) <= 0)) {
      best = { sets: ex.sets, metrics: ex.metrics, method: ex.method };
    }
    if (ex.provenOptimal && best && !ex.foundByModel && ex.sets === best.sets) notes.push(`the plan is the heuristic's; the ${ex.method.replace(/^exact: /, '')} proves it optimal`);
    if (ex.bound !== null) {
      const key = objective === 'registers' ? 'registers' : objective === 'muxes' ? 'muxInputs' : 'latencyAdded';
      const prev = bound[key];
      if (prev === undefined || ex.bound > prev) bound = { ...bound, [key]: ex.bound };
    }
    if (ex.infeasible && !best) {
      return {
        ...base,
        status: 'infeasible',
        method: ex.method,
        sets: {},
        objective: null,
        bound: null,
        gapPercent: null,
        reasons: ['the exact model proves that no placement of the operations on these units admits a retiming at this N'],
        suggestion: bounds.suggestion ?? { factor: options.factor + 1 },
        seconds: seconds(),
        notes,
      };
    }
    provenOptimal = ex.provenOptimal && !!best && best.sets === ex.sets;
    if (!ex.solverAnswered) notes.push('the exact model gave no answer (see the notes above); the plan is the heuristic\'s');
  }

  if (!best) {
    return {
      ...base,
      status: 'infeasible',
      method: h.method,
      sets: {},
      objective: null,
      bound: null,
      gapPercent: null,
      reasons: [
        options.signal?.aborted
          ? 'cancelled before a plan was found (not a proof that none exists)'
          : `no plan was found (${h.reason ?? 'search exhausted'}); the bounds do not rule one out, so this is not a proof: try a larger N, more units, more time, or the exact model`,
      ],
      suggestion: { factor: options.factor + 1 },
      seconds: seconds(),
      notes,
    };
  }

  // The plan as `pleat check` will see it, once more (cheap next to the search).
  const final = scored && best.metrics === scored.metrics ? scored : evaluateDesign(designWithSets(design, options.factor, options.units, best.sets));
  if (!final.feasible || !final.metrics) throw new Error('internal: the chosen plan failed the engine check');
  const metrics = final.metrics;
  const key = objective === 'registers' ? 'registers' : objective === 'muxes' ? 'muxInputs' : 'latencyAdded';
  const primaryValue = primary(metrics, objective);
  const primaryBound = bound[key];
  const gap = primaryBound === undefined ? null : gapPercent(primaryValue, primaryBound);
  const optimal = provenOptimal || (primaryBound !== undefined && primaryValue <= primaryBound);
  return {
    ...base,
    status: optimal ? 'optimal' : 'feasible',
    method: best.method,
    sets: best.sets,
    objective: metrics,
    bound,
    gapPercent: optimal ? 0 : gap,
    reasons: [],
    suggestion: null,
    seconds: seconds(),
    notes,
  };
}
