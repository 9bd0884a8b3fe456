// The shapes the server's API returns (server/resources/*/routes.ts), as the web report reads
// them. Dates arrive as ISO strings. The shapes the server's code names too live in
// shared/api.ts; the report itself uses the shared types of shared/types.ts.
import type { Comparison, PublicUser, RunDesignRow } from '../../shared/api';
import type { DesignReport, EffectiveRules, Report, Rules, Status } from '../../shared/types';

export type { ApiErrorBody, Basis, Comparison, DesignDelta, Metric, PublicUser, Regression, RunDesignRow } from '../../shared/api';
export type { CurrentPlan, JobAttempt, JobDetail, JobKind, JobObjective, JobPlan, JobPlanMetrics, JobProgress, JobResult, JobStatus, JobSummary, JobSweepRow, JobUnit } from '../../shared/api';

export type Role = 'lead' | 'engineer' | 'viewer';
/** The caller's role as the server reports it per project: 'admin' for admins. */
export type ProjectRole = 'admin' | Role;

export interface Me {
  user: PublicUser;
  memberships: { project: { slug: string; name: string }; role: Role }[];
}

export interface Project {
  slug: string;
  name: string;
  baseBranch: string;
  regressionTolerance: number;
  role: ProjectRole | null;
  createdAt: string;
}

export interface TrendPoint {
  runId: number;
  commit: string;
  verdict: Status;
  utilization: number | null;
  registerMinimum: number | null;
  violations: number;
  createdAt: string;
}

export interface Branch {
  name: string;
  isBase: boolean;
  watching: boolean;
  lastRunAt: string;
  latest: { id: number; commit: string; verdict: Status } | null;
  trend: TrendPoint[];
}

export interface BranchList {
  baseBranch: string;
  branches: Branch[];
}

export interface RunSummary {
  designs: number;
  failed: number;
  errors: number;
  utilization: number | null;
  registerMinimum: number | null;
  violations: number;
}

export interface RunListItem {
  id: number;
  branch: string;
  commit: string;
  baseBranch: string | null;
  baseCommit: string | null;
  verdict: Status;
  toolVersion: string;
  createdAt: string;
  summary: RunSummary;
  designs: RunDesignRow[];
}

export interface RunPage {
  runs: RunListItem[];
  nextCursor: string | null;
}

export interface RunDetail {
  run: Omit<RunListItem, 'designs'> & { project: { slug: string; name: string }; designs: RunDesignRow[] };
  comparison: Comparison;
  report: Report;
}

export interface TeamRules {
  rules: Rules;
  regressionTolerance: number;
  updatedAt: string | null;
  updatedBy: { id: number; name: string } | null;
}

export interface RuleChange {
  id: number;
  rule: string;
  oldValue: unknown;
  newValue: unknown;
  at: string;
  by: { id: number; name: string } | null;
}

export interface RuleHistory {
  changes: RuleChange[];
  nextBefore: number | null;
}

export interface CiToken {
  id: number;
  name: string;
  prefix: string;
  createdBy: { id: number; name: string } | null;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

export interface Member {
  user: PublicUser;
  role: Role;
  since: string;
}

export interface Invitation {
  id: number;
  email: string;
  role: Role | null;
  isAdmin: boolean;
  project: { slug: string; name: string } | null;
  expiresAt: string;
  acceptedAt: string | null;
  createdAt: string;
}

export interface AnalyzeResult {
  design: DesignReport;
  rules: EffectiveRules;
}

export type { DesignReport, EffectiveRules, Report, Rules, Status };
