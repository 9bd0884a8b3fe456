// Two reports compared in the terms of folding: per design, what moved in the plan (folding
// factor, units per kind, registers, utilization, negative folded delays, loops and retiming,
// the rules it breaks), and which designs came or went. Designs are matched by name (by file
// for a design without one). `pleat diff` prints it; the web can show the same comparison.
import type { DesignReport, Report, RuleName, Status } from '../types';

export interface Change<T> {
  before: T;
  now: T;
}

export interface DesignDiff {
  name: string;
  file: string;
  status: Change<Status>;
  factor: Change<number | null>;
  /** Units per kind, from the schedule. */
  units: Change<Record<string, number>>;
  registers: Change<number | null>;
  utilization: Change<number | null>;
  negativeEdges: Change<number | null>;
  /** Whether a retiming exists (null for an invalid design). */
  retimable: Change<boolean | null>;
  /** The iteration bound as `num/den` text (null: no loop, or invalid). */
  iterationBound: Change<string | null>;
  latencyAdded: Change<number | null>;
  rulesBroken: { added: RuleName[]; cleared: RuleName[]; still: RuleName[] };
  /** True when any of the above differs. */
  moved: boolean;
}

export interface DesignBrief {
  name: string;
  file: string;
  status: Status;
  factor: number | null;
}

export interface ReportDiff {
  designs: DesignDiff[];
  added: DesignBrief[];
  removed: DesignBrief[];
  verdict: Change<Status>;
}

function keyOf(d: DesignReport): string {
  return d.name ?? `file:${d.file}`;
}

function unitsOf(d: DesignReport): Record<string, number> {
  const out: Record<string, number> = {};
  for (const row of d.schedule ?? []) out[row.kind] = (out[row.kind] ?? 0) + 1;
  return out;
}

function negatives(d: DesignReport): number | null {
  if (!d.edges) return null;
  let n = 0;
  for (const e of d.edges) if (e.foldedDelay !== null && e.foldedDelay < 0) n++;
  return n;
}

function bound(d: DesignReport): string | null {
  const b = d.iterationBound;
  if (!b) return null;
  return b.denominator === 1 ? String(b.numerator) : `${b.numerator}/${b.denominator}`;
}

function broken(d: DesignReport): RuleName[] {
  return [...new Set(d.violations.map((v) => v.rule))];
}

function same<T>(c: Change<T>): boolean {
  return JSON.stringify(c.before) === JSON.stringify(c.now);
}

/** The change of one design from `a` to `b`. */
export function diffDesign(a: DesignReport, b: DesignReport): DesignDiff {
  const ra = broken(a);
  const rb = broken(b);
  const d: DesignDiff = {
    name: b.name ?? a.name ?? b.file,
    file: b.file,
    status: { before: a.status, now: b.status },
    factor: { before: a.factor ?? null, now: b.factor ?? null },
    units: { before: unitsOf(a), now: unitsOf(b) },
    registers: { before: a.registers?.minimum ?? null, now: b.registers?.minimum ?? null },
    utilization: { before: a.utilization?.overall ?? null, now: b.utilization?.overall ?? null },
    negativeEdges: { before: negatives(a), now: negatives(b) },
    retimable: { before: a.retiming ? a.retiming.feasible : null, now: b.retiming ? b.retiming.feasible : null },
    iterationBound: { before: bound(a), now: bound(b) },
    latencyAdded: { before: a.retiming?.feasible ? a.retiming.latencyAdded : null, now: b.retiming?.feasible ? b.retiming.latencyAdded : null },
    rulesBroken: { added: rb.filter((r) => !ra.includes(r)), cleared: ra.filter((r) => !rb.includes(r)), still: rb.filter((r) => ra.includes(r)) },
    moved: false,
  };
  d.moved = [d.status, d.factor, d.units, d.registers, d.utilization, d.negativeEdges, d.retimable, d.iterationBound, d.latencyAdded].some((c) => !same(c as Change<unknown>)) || d.rulesBroken.added.length + d.rulesBroken.cleared.length > 0;
  return d;
}

function brief(d: DesignReport): DesignBrief {
  return { name: d.name ?? d.file, file: d.file, status: d.status, factor: d.factor ?? null };
}

/** Compares a base report with a newer one. Designs keep the newer report's order. */
export function diffReports(base: Pick<Report, 'designs' | 'verdict'>, now: Pick<Report, 'designs' | 'verdict'>): ReportDiff {
  const before = new Map(base.designs.map((d) => [keyOf(d), d]));
  const seen = new Set<string>();
  const designs: DesignDiff[] = [];
  const added: DesignBrief[] = [];
  for (const d of now.designs) {
    const k = keyOf(d);
    const a = before.get(k);
    if (a) {
      seen.add(k);
      designs.push(diffDesign(a, d));
    } else added.push(brief(d));
  }
  const removed = base.designs.filter((d) => !seen.has(keyOf(d))).map(brief);
  return { designs, added, removed, verdict: { before: base.verdict, now: now.verdict } };
}
