// Assembles the stable check report (format pleat-report/1) from load, analysis and rule results.
// Convention: a design with any error diagnostic has status 'error' and null analysis fields;
// otherwise 'fail' when a rule is broken, else 'pass'; the verdict is the worst status.
import type {
  Analysis,
  Diagnostic,
  DesignReport,
  EffectiveRules,
  Report,
  Status,
  Violation,
} from '../types';

export const REPORT_FORMAT = 'pleat-report/1' as const;

const STATUS_RANK: Record<Status, number> = { pass: 0, fail: 1, error: 2 };

/** The worst of some statuses: error over fail over pass; 'pass' for none. */
export function worstStatus(statuses: Iterable<Status>): Status {
  let worst: Status = 'pass';
  for (const s of statuses) if (STATUS_RANK[s] > STATUS_RANK[worst]) worst = s;
  return worst;
}

export interface DesignReportInput {
  /** Path of the design file as the report names it (forward slashes). */
  file: string;
  /** The design's name; for an invalid file whatever name could be read, else null. */
  name: string | null;
  diagnostics: Diagnostic[];
  /** null when the design could not be loaded. */
  analysis: Analysis | null;
  violations?: Violation[];
  /** Warnings from the rules, appended after the loader's diagnostics. */
  ruleWarnings?: Diagnostic[];
}

/**
 * One design's entry. Keys come in the documented order, so the JSON reads top-down like the
 * documentation; analysis fields are null (not missing) for a design in error.
 */
export function designReport(input: DesignReportInput): DesignReport {
  const diagnostics = [...input.diagnostics, ...(input.ruleWarnings ?? [])];
  const hasError = diagnostics.some((d) => d.severity === 'error');
  const a = hasError ? null : input.analysis;
  const violations = a ? (input.violations ?? []) : [];
  const status: Status = hasError || !a ? 'error' : violations.length > 0 ? 'fail' : 'pass';
  // Analysis fields are typed non-null in Analysis; the report contract says null on error.
  const entry = {
    file: input.file,
    name: input.name,
    status,
    diagnostics,
    factor: a ? a.factor : null,
    edges: a ? a.edges : null,
    retiming: a ? a.retiming : null,
    utilization: a ? a.utilization : null,
    registers: a ? a.registers : null,
    iterationBound: a ? a.iterationBound : null,
    factorLowerBound: a ? a.factorLowerBound : null,
    samplePeriodNs: a ? a.samplePeriodNs : null,
    sampleRateMHz: a ? a.sampleRateMHz : null,
    schedule: a ? a.schedule : null,
    lifetimes: a ? a.lifetimes : null,
    allocation: a ? a.allocation : null,
    ...(a && a.allocationOmitted !== undefined ? { allocationOmitted: a.allocationOmitted } : {}),
    ...(a && a.control !== undefined ? { control: a.control } : {}),
    ...(a && a.controlOmitted !== undefined ? { controlOmitted: a.controlOmitted } : {}),
    ...(a && a.outputLatency !== undefined ? { outputLatency: a.outputLatency } : {}),
    violations,
  };
  if (!hasError && !a) {
    // A caller passed no analysis and no error: that is an internal mistake, reported as such.
    entry.diagnostics = [
      ...diagnostics,
      { severity: 'error', code: 'internal-error', message: 'the design was not analysed', line: null, column: null },
    ];
  }
  return entry as unknown as DesignReport;
}

export interface ReportInput {
  version: string;
  git: Report['git'];
  rules: EffectiveRules;
  designs: DesignReport[];
}

export function buildReport(input: ReportInput): Report {
  return {
    format: REPORT_FORMAT,
    tool: { name: 'pleat', version: input.version },
    git: input.git,
    verdict: worstStatus(input.designs.map((d) => d.status)),
    rules: input.rules,
    designs: input.designs,
  };
}

/** Process exit code for a report: 2 for any invalid design, 1 for any broken rule, else 0. */
export function exitCodeOf(report: Pick<Report, 'verdict'>): 0 | 1 | 2 {
  return report.verdict === 'error' ? 2 : report.verdict === 'fail' ? 1 : 0;
}

/** Counts for summaries and JUnit: designs per status. */
export function countStatuses(designs: Pick<DesignReport, 'status'>[]): Record<Status, number> {
  const c: Record<Status, number> = { pass: 0, fail: 0, error: 0 };
  for (const d of designs) c[d.status]++;
  return c;
}
