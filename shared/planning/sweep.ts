// Method: factor sweep: per N the fewest units of each kind that admit a plan (from ceil(operations / N)
// upwards), the best plan (plan.ts), and the Pareto front over (total units, registers, sample period).
// Convention: units the sweep makes reuse the design's unit ids of that kind first, then ids `<kind>-<k>`.
import type { Design, Unit } from '../types';
import { planDesign } from './plan';
import type { PlanResult, SweepOptions, SweepRow } from './types';

/** Operations of each kind, in the order the kinds first appear. */
function opsPerKind(design: Design): Map<string, number> {
  const m = new Map<string, number>();
  for (const n of design.nodes) if (n.kind !== 'input' && n.kind !== 'output') m.set(n.kind, (m.get(n.kind) ?? 0) + 1);
  return m;
}

/** Units for given counts per kind: the design's own units of the kind first, then new ones. */
export function unitsFor(design: Design, counts: Record<string, number>, stages: Record<string, number> = {}): Unit[] {
  const taken = new Set<string>([...design.nodes.map((n) => n.id), ...design.units.map((u) => u.id)]);
  const out: Unit[] = [];
  for (const kind of Object.keys(counts)) {
    const own = design.units.filter((u) => u.kind === kind);
    const s = stages[kind] ?? own[0]?.stages ?? 0;
    for (let i = 0; i < counts[kind]; i++) {
      if (i < own.length && stages[kind] === undefined) {
        out.push({ ...own[i] });
        continue;
      }
      if (i < own.length) {
        out.push({ id: own[i].id, kind, stages: s });
        continue;
      }
      let k = i;
      let id = `${kind}-${k}`;
      while (taken.has(id)) id = `${kind}-${++k}`;
      taken.add(id);
      out.push({ id, kind, stages: s });
    }
  }
  return out;
}

export async function sweepDesign(design: Design, options: SweepOptions): Promise<SweepRow[]> {
  const perKind = opsPerKind(design);
  const rows: SweepRow[] = [];
  const factors = [...new Set(options.factors)].filter((f) => Number.isInteger(f) && f >= 1).sort((a, b) => a - b);
  // The time limit is the sweep's: each factor gets an even share of what is left, and the unit
  // counts tried at one factor share that factor's time (the first half of it, then half of the rest ...).
  const now = options.now ?? (() => Date.now());
  const deadline = now() + Math.max(0, options.timeLimitSeconds) * 1000;
  const maxExtra = options.maxExtraUnits ?? 8;
  let done = 0;
  const totalOps = [...perKind.values()].reduce((a, b) => a + b, 0);
  for (const [index, N] of factors.entries()) {
    if (options.signal?.aborted) break;
    const factorDeadline = now() + Math.max(0, deadline - now()) / (factors.length - index);
    options.onProgress?.({ phase: `sweep N = ${N}`, done, total: factors.length });
    const counts: Record<string, number> = {};
    for (const [kind, ops] of perKind) {
      counts[kind] = options.units === 'auto' ? Math.max(1, Math.ceil(ops / N)) : (options.units[kind] ?? 0);
    }
    let plan: PlanResult | null = null;
    for (let extra = 0; extra <= (options.units === 'auto' ? maxExtra : 0); extra++) {
      const units = unitsFor(design, counts, options.stages);
      const left = Math.max(0, factorDeadline - now()) / 1000;
      plan = await planDesign(design, {
        objective: options.objective,
        timeLimitSeconds: options.units === 'auto' && extra < maxExtra ? left / 2 : left,
        solver: options.solver,
        now: options.now,
        signal: options.signal,
        exactMaxOperations: options.exactMaxOperations,
        factor: N,
        units,
      });
      if (plan.status !== 'infeasible' || options.units !== 'auto') break;
      // More units cannot help when the loops or the boundary rule out this N.
      const want = plan.suggestion?.units;
      if (!want && plan.method.startsWith('bounds')) break;
      let raised = false;
      for (const kind of Object.keys(counts)) {
        if (want && (want[kind] ?? 0) > counts[kind]) {
          counts[kind] = want[kind];
          raised = true;
        }
      }
      if (!raised) for (const kind of Object.keys(counts)) counts[kind]++;
    }
    const unitCount: Record<string, number> = {};
    for (const u of plan!.units) unitCount[u.kind] = (unitCount[u.kind] ?? 0) + 1;
    const total = plan!.units.length;
    rows.push({
      factor: N,
      units: unitCount,
      plan: plan!,
      utilization: plan!.status === 'infeasible' || total === 0 ? null : totalOps / (total * N),
      samplePeriodNs: design.clockNs !== undefined ? design.clockNs * N : null,
      pareto: false,
    });
    done++;
  }
  // Pareto front over (total units, registers, sample period), among the rows with a plan.
  const feasible = rows.filter((r) => r.plan.status !== 'infeasible' && r.plan.objective);
  const key = (r: SweepRow): [number, number, number] => [r.plan.units.length, r.plan.objective!.registers, r.samplePeriodNs ?? r.factor];
  for (const r of feasible) {
    const a = key(r);
    r.pareto = !feasible.some((o) => {
      if (o === r) return false;
      const b = key(o);
      return b[0] <= a[0] && b[1] <= a[1] && b[2] <= a[2] && (b[0] < a[0] || b[1] < a[1] || b[2] < a[2]);
    });
  }
  options.onProgress?.({ phase: 'sweep done', done, total: factors.length });
  return rows;
}
