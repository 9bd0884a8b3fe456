// Where `pleat plan` and `pleat sweep` get the planner from. The planning engine
// (shared/planning/) is built on another branch; until it is merged here, this module holds a
// small exhaustive stand-in (every set assignment of designs up to a few operations, scored as
// `pleat check` scores them) so the commands run end to end. It is replaced by the engine's
// planDesign and sweepDesign at merge time.
import type { Design, Unit } from '../../shared/types';
import type { PlanDesign, PlanMetrics, PlanObjective, PlanOptions, PlanResult, SweepDesign, SweepOptions, SweepRow } from './api';

export interface Planner {
  planDesign: PlanDesign;
  sweepDesign: SweepDesign;
}

export async function loadPlanner(): Promise<Planner> {
  const [{ analyze }, { controlTables }] = await Promise.all([import('../../shared/analyze'), import('../../shared/control')]);
  const planDesign: PlanDesign = async (design, options) => exhaustive(design, options, analyze, controlTables);
  const sweepDesign: SweepDesign = async (design, options) => {
    const rows: SweepRow[] = [];
    for (const factor of options.factors) {
      const ops = opsPerKind(design);
      let units: Unit[] = [];
      for (const [kind, n] of ops) {
        const want = options.units === 'auto' ? Math.ceil(n / factor) : (options.units[kind] ?? design.units.filter((u) => u.kind === kind).length);
        const base = design.units.filter((u) => u.kind === kind);
        const stages = options.stages?.[kind] ?? base[0]?.stages ?? 0;
        for (let i = 0; i < want; i++) units.push(base[i] ?? { id: `${kind.toUpperCase()}${i + 1}`, kind, stages });
      }
      let plan = await planDesign(design, { ...options, factor, units });
      // 'auto': more units of the short kinds until a plan exists (a few tries).
      for (let extra = 0; options.units === 'auto' && plan.status === 'infeasible' && plan.suggestion?.units && extra < 4; extra++) {
        units = [...units];
        for (const [kind, n] of Object.entries(plan.suggestion.units)) {
          const have = units.filter((u) => u.kind === kind).length;
          const st = units.find((u) => u.kind === kind)?.stages ?? 0;
          for (let i = have; i < n; i++) units.push({ id: `${kind.toUpperCase()}${i + 1}`, kind, stages: st });
        }
        plan = await planDesign(design, { ...options, factor, units });
      }
      const counts: Record<string, number> = {};
      for (const u of units) counts[u.kind] = (counts[u.kind] ?? 0) + 1;
      const opsTotal = [...ops.values()].reduce((a, b) => a + b, 0);
      rows.push({
        factor,
        units: counts,
        plan,
        utilization: plan.status === 'infeasible' ? null : opsTotal / (units.length * factor),
        samplePeriodNs: design.clockNs !== undefined ? design.clockNs * factor : null,
        pareto: false,
      });
    }
    markPareto(rows);
    return rows;
  };
  return { planDesign, sweepDesign };
}

function opsPerKind(design: Design): Map<string, number> {
  const m = new Map<string, number>();
  for (const n of design.nodes) if (n.kind !== 'input' && n.kind !== 'output') m.set(n.kind, (m.get(n.kind) ?? 0) + 1);
  return m;
}

function markPareto(rows: SweepRow[]): void {
  const key = (r: SweepRow) => [Object.values(r.units).reduce((a, b) => a + b, 0), r.plan.objective!.registers, r.samplePeriodNs ?? r.factor];
  const ok = rows.filter((r) => r.plan.objective);
  for (const r of ok) {
    const a = key(r);
    r.pareto = !ok.some((o) => {
      const b = key(o);
      return o !== r && b.every((x, i) => x <= a[i]) && b.some((x, i) => x < a[i]);
    });
  }
}

function order(m: PlanMetrics, objective: PlanObjective): number[] {
  if (objective === 'muxes') return [m.muxInputs, m.registers, m.latencyAdded];
  if (objective === 'latency') return [m.latencyAdded, m.registers, m.muxInputs];
  return [m.registers, m.muxInputs, m.latencyAdded];
}

const MAX_ASSIGNMENTS = 200_000;

async function exhaustive(
  design: Design,
  options: PlanOptions,
  analyze: typeof import('../../shared/analyze').analyze,
  controlTables: typeof import('../../shared/control').controlTables,
): Promise<PlanResult> {
  const t0 = Date.now();
  const N = options.factor;
  const units = options.units;
  const base = (): PlanResult => ({
    status: 'infeasible', method: 'exhaustive stand-in', factor: N, units, sets: {}, objective: null, bound: null, gapPercent: null, pins: [], reasons: [], suggestion: null, seconds: 0,
  });
  const ops = design.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output');
  const unitIds = new Set(units.map((u) => u.id));
  const pinned = new Map<string, [string, number]>();
  for (const [u, list] of Object.entries(design.folding.sets)) {
    if (!unitIds.has(u)) continue;
    list.forEach((v, p) => {
      if (v !== null) pinned.set(v, [u, p]);
    });
  }
  // A kind with more operations than unit slots: no plan, and the count that would admit one.
  const counts = opsPerKind(design);
  const short: Record<string, number> = {};
  const result = base();
  for (const [kind, n] of counts) {
    const have = units.filter((u) => u.kind === kind).length;
    if (have * N < n) {
      short[kind] = Math.ceil(n / N);
      result.reasons.push(`kind ${kind} has ${n} operations but ${have} unit(s) x N=${N} give only ${have * N} slots`);
    }
  }
  if (Object.keys(short).length) {
    result.suggestion = { units: short };
    result.seconds = (Date.now() - t0) / 1000;
    return result;
  }
  const choices = ops.map((op) => {
    const pin = pinned.get(op.id);
    if (pin) return [pin];
    const c: [string, number][] = [];
    for (const u of units) if (u.kind === op.kind) for (let p = 0; p < N; p++) c.push([u.id, p]);
    return c;
  });
  if (choices.reduce((a, c) => a * c.length, 1) > MAX_ASSIGNMENTS) {
    result.reasons.push(`the stand-in planner of this build enumerates at most ${MAX_ASSIGNMENTS} assignments; this design needs the planning engine`);
    result.seconds = (Date.now() - t0) / 1000;
    return result;
  }
  let best: { sets: Record<string, (string | null)[]>; m: PlanMetrics } | null = null;
  let minFactor: number | null = null;
  const used = new Set<string>();
  const pick: [string, number][] = [];
  const visit = (i: number) => {
    if (i === ops.length) {
      const sets: Record<string, (string | null)[]> = {};
      for (const u of units) sets[u.id] = Array.from({ length: N }, () => null);
      pick.forEach(([u, p], j) => (sets[u][p] = ops[j].id));
      const d: Design = { ...design, units, folding: { ...design.folding, factor: N, sets } };
      const a = analyze(d);
      if (!a.retiming.feasible || !a.registers) {
        minFactor = Math.max(minFactor ?? 0, a.factorLowerBound);
        return;
      }
      const { control } = controlTables(d, a);
      const m: PlanMetrics = { registers: a.registers.minimum, muxInputs: control ? control.muxes.reduce((s, x) => s + x.sources.length, 0) : 0, latencyAdded: a.retiming.latencyAdded };
      if (!best || compare(order(m, options.objective), order(best.m, options.objective)) < 0) best = { sets, m };
      return;
    }
    for (const [u, p] of choices[i]) {
      const k = `${u}@${p}`;
      if (used.has(k)) continue;
      used.add(k);
      pick.push([u, p]);
      visit(i + 1);
      pick.pop();
      used.delete(k);
    }
  };
  visit(0);
  const found = best as { sets: Record<string, (string | null)[]>; m: PlanMetrics } | null;
  result.seconds = (Date.now() - t0) / 1000;
  result.pins = [...pinned.keys()].filter((id) => ops.some((o) => o.id === id));
  if (!found) {
    result.reasons.push(`no assignment of the operations to units and partitions admits a retiming at N=${N}${minFactor !== null && minFactor > N ? `; a loop needs N >= ${minFactor}` : ''}`);
    if (minFactor !== null && minFactor > N) result.suggestion = { factor: minFactor };
    return result;
  }
  const bound = { ...found.m };
  return { ...result, status: 'optimal', sets: found.sets, objective: found.m, bound, gapPercent: 0, reasons: [] };
}

function compare(a: number[], b: number[]): number {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i] - b[i];
  return 0;
}

export type { SweepOptions };
