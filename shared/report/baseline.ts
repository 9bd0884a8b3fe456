// Baselines (format pleat-baseline/1): the broken rules a repository accepts for now, so a gate
// can be adopted on designs that do not fold yet and still fail on anything new or worse.
// A finding is matched by design name, rule and subject (the edge or the unit), never by line.
import type { Report } from '../types';
import { designFindings, type Finding } from './findings';

export const BASELINE_FORMAT = 'pleat-baseline/1' as const;

export interface BaselineEntry {
  design: string;
  rule: string;
  /** `edge a -> b`, `unit MUL1`, or '' for the design as a whole. */
  subject: string;
  limit: number | string | null;
  actual: number | string | null;
  /** For people reading the file; not compared. */
  message: string;
}

export interface Baseline {
  format: typeof BASELINE_FORMAT;
  tool: { name: 'pleat'; version: string };
  findings: BaselineEntry[];
}

function keyOf(design: string, rule: string, subject: string): string {
  return JSON.stringify([design, rule, subject]);
}

/** The broken rules of a report as a baseline, sorted so the file diffs well. */
export function baselineOf(report: Report, version: string): Baseline {
  const findings: BaselineEntry[] = [];
  for (const d of report.designs) {
    for (const f of designFindings(d)) {
      if (!f.rule) continue;
      findings.push({ design: d.name ?? d.file, rule: f.rule, subject: f.subject, limit: f.limit ?? null, actual: f.actual ?? null, message: f.message });
    }
  }
  findings.sort((a, b) => (a.design < b.design ? -1 : a.design > b.design ? 1 : a.rule < b.rule ? -1 : a.rule > b.rule ? 1 : a.subject < b.subject ? -1 : a.subject > b.subject ? 1 : 0));
  return { format: BASELINE_FORMAT, tool: { name: 'pleat', version }, findings };
}

/** Reads a baseline file's JSON; a list of problems when it is not one. */
export function parseBaseline(value: unknown): { baseline: Baseline | null; problem: string | null } {
  if (!value || typeof value !== 'object' || Array.isArray(value)) return { baseline: null, problem: 'not a JSON object' };
  const v = value as Record<string, unknown>;
  if (v.format !== BASELINE_FORMAT) return { baseline: null, problem: `format must be "${BASELINE_FORMAT}" (got ${JSON.stringify(v.format ?? null)})` };
  if (!Array.isArray(v.findings)) return { baseline: null, problem: 'findings must be a list' };
  for (const [i, f] of v.findings.entries()) {
    const e = f as Record<string, unknown>;
    if (!e || typeof e.design !== 'string' || typeof e.rule !== 'string' || typeof e.subject !== 'string') {
      return { baseline: null, problem: `findings[${i}] needs design, rule and subject as text` };
    }
  }
  return { baseline: v as unknown as Baseline, problem: null };
}

/** True when `now` is worse than `then` for this rule (more negative edges, lower utilization, more registers). */
function isWorse(rule: string, then: number | string | null, now: number | string | undefined): boolean {
  if (typeof then !== 'number' || typeof now !== 'number') {
    // A count that became "no retiming", or the other way round, is a change of kind: worse only
    // when retiming became impossible.
    return now === 'no retiming' && then !== 'no retiming';
  }
  if (rule === 'min_utilization' || rule === 'min_unit_utilization') return now < then - 1e-9;
  return now > then;
}

export interface BaselineOutcome {
  /** Broken rules found in the baseline and no worse. */
  baselined: Finding[];
  /** Broken rules not in the baseline. */
  fresh: Finding[];
  /** Broken rules in the baseline whose value got worse. */
  worse: { finding: Finding; was: BaselineEntry }[];
  /** Baseline entries no longer found (fixed, or the design was renamed). */
  gone: BaselineEntry[];
}

/** Splits the broken rules of a report by the baseline. Diagnostics are not baselined. */
export function compareWithBaseline(report: Report, baseline: Baseline): BaselineOutcome {
  const known = new Map<string, BaselineEntry[]>();
  for (const e of baseline.findings) {
    const k = keyOf(e.design, e.rule, e.subject);
    known.set(k, [...(known.get(k) ?? []), e]);
  }
  const out: BaselineOutcome = { baselined: [], fresh: [], worse: [], gone: [] };
  for (const d of report.designs) {
    for (const f of designFindings(d)) {
      if (!f.rule) continue;
      const list = known.get(keyOf(d.name ?? d.file, f.rule, f.subject));
      const was = list?.shift();
      if (!was) out.fresh.push(f);
      else if (isWorse(f.rule, was.actual, f.actual)) out.worse.push({ finding: f, was });
      else out.baselined.push(f);
    }
  }
  for (const list of known.values()) out.gone.push(...list);
  return out;
}

/** Exit code of a check under a baseline: 2 for an invalid design, 1 for anything new or worse, else 0. */
export function exitCodeWithBaseline(report: Pick<Report, 'verdict'>, outcome: BaselineOutcome): 0 | 1 | 2 {
  if (report.verdict === 'error') return 2;
  return outcome.fresh.length + outcome.worse.length > 0 ? 1 : 0;
}
