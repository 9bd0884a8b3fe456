// The JSON shapes of the server's API: the server's presenters build them (server/http/present.ts
// `send` checks each response against its type) and the web report reads them (src/api/types.ts
// re-exports this module). Types only. Times travel as ISO 8601 strings.
import type { DesignReport, EffectiveRules, Report, Rules, SimulationRules, Status, Unit } from '../types';
import type { PlanMetrics, PlanResult, SweepRow } from '../planning/types';

/** The body of every error response. */
export interface ApiErrorBody {
  error: { code: string; message: string; details?: unknown };
}

/** A user as any client may see them (never a password hash). */
export interface PublicUser {
  id: number;
  email: string;
  name: string;
  isAdmin: boolean;
  active: boolean;
}

/** One design of a stored run, from the numbers kept beside the report. */
export interface RunDesignRow {
  name: string;
  file: string;
  status: Status;
  utilization: number | null;
  registerMinimum: number | null;
  negativeEdges: number | null;
  retimingFeasible: boolean | null;
  violations: number;
  /** The plan: folding factor, units, iterations of latency retiming adds (null for an invalid design or an older run). */
  factor: number | null;
  units: number | null;
  latencyAdded: number | null;
  /** Area and logic depth of `pleat rtl --area` uploaded with the run (docs/rtl.md); in the branch history, and only when a summary was attached. */
  hardware?: DesignHardware;
}

/** One side of a hardware summary as the server keeps it (generic cells of Yosys; depth in levels of cells, null for a combinational loop). */
export interface HardwareFigures {
  cells: number;
  flipFlops: number;
  depth: number | null;
  factor: number;
}

/** The figures of a design's hardware summary (shared/report/hardwareSummary.ts) stored with a run. */
export interface DesignHardware {
  version: number;
  folded: HardwareFigures;
  parallel: HardwareFigures;
}

/** A number of this run beside the same number of the base run. */
export interface Metric {
  current: number | null;
  base: number | null;
  delta: number | null;
}

export type Regression = 'status' | 'utilization' | 'registerMinimum' | 'violations';

/** How the base run was chosen: at the merge-base commit, the nearest earlier run, or none found. */
export type Basis = 'merge-base' | 'nearest-earlier' | 'none';

export interface DesignDelta {
  name: string;
  file: string;
  /** 'added': only in this run; 'removed': only in the base run; 'kept': in both. */
  presence: 'added' | 'removed' | 'kept';
  status: Status | null;
  baseStatus: Status | null;
  utilization: Metric;
  registerMinimum: Metric;
  violations: Metric;
  /** What moved in the plan itself. */
  factor: Metric;
  units: Metric;
  negativeEdges: Metric;
  latencyAdded: Metric;
  /** Whether a retiming removes every negative folded delay (false: a loop stops it). */
  retimingFeasible: { current: boolean | null; base: boolean | null };
  /** What got worse past the project's tolerance. */
  regressions: Regression[];
}

export interface Comparison {
  basis: Basis;
  baseBranch: string;
  baseRun: { id: number; commit: string; verdict: Status; createdAt: string } | null;
  tolerance: number;
  designs: DesignDelta[];
}

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
  /** Days runs of branches other than the base are kept; null: kept for as long as the project. */
  branchRunDays: number | null;
  role: ProjectRole | null;
  createdAt: string;
  /** The git host the project posts pull-request feedback to, and how that last went; null: not connected. */
  host: HostStatus | null;
}

// ---------------------------------------------------------------- git hosts (docs/server.md, Git hosts)

export type HostKind = 'github' | 'gitlab';

/** What every member sees of a project's git host: which one, and the last outcome of the feedback. */
export interface HostStatus {
  kind: HostKind;
  repository: string;
  /** The repository's web page on the host (for links to files: GitHub `<webUrl>/blob/<commit>/<path>`, GitLab `<webUrl>/-/blob/<commit>/<path>`); null when it cannot be told from the settings. */
  webUrl: string | null;
  /** The last time a status and comment were posted (or no open request was found) without a failure. */
  lastOkAt: string | null;
  /** The last failure to talk to the host, kept until it is replaced by a newer one. */
  lastError: string | null;
  lastErrorAt: string | null;
}

/** The connection as a lead manages it. The token itself never leaves the server again. */
export interface HostConnection extends HostStatus {
  apiUrl: string;
  token: { set: boolean; last4: string };
  updatedAt: string;
  updatedBy: { id: number; name: string } | null;
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
  /** First line of the commit's message and its author, as the CLI sent them (null from older CLIs). */
  message: string | null;
  author: string | null;
  /** min_utilization of the rules the run was checked against (null when none was in force). */
  utilizationFloor: number | null;
  summary: RunSummary;
  designs: RunDesignRow[];
}

export interface RunPage {
  runs: RunListItem[];
  nextCursor: string | null;
}

/** The answer to an upload from CI (201 created, 200 when the commit was stored before). */
export interface UploadResult {
  created: boolean;
  run: Omit<RunListItem, 'designs'>;
  url: string;
}

export interface RunDetail {
  run: Omit<RunListItem, 'designs'> & { project: { slug: string; name: string }; designs: RunDesignRow[] };
  comparison: Comparison;
  report: Report;
}

/** A team's rules: the gate's and the two that `pleat simulate` gates on (both in RULES_SCHEMA). */
export type TeamRuleSet = Rules & SimulationRules;

export interface TeamRules {
  rules: TeamRuleSet;
  regressionTolerance: number;
  updatedAt: string | null;
  updatedBy: { id: number; name: string } | null;
}

export interface RuleChange {
  id: number;
  rule: string;
  oldValue: unknown;
  newValue: unknown;
  /** Why, as the lead wrote it; null when none was given. */
  reason: string | null;
  /** Set when the change came from a revert: the change whose state the rules went back to. */
  revertOf: number | null;
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

/** GET /api/projects/:slug/watches: the branches the caller watches. */
export interface WatchList {
  branches: string[];
}

/** PUT or DELETE of a branch's watch: the state after the call. */
export interface WatchState {
  branch: string;
  watching: boolean;
}

/** The answer to accepting an invitation: signedIn only when the acceptance made the account. */
export interface InvitationAccepted {
  user: PublicUser;
  project: { slug: string; name: string } | null;
  role: Role | null;
  signedIn: boolean;
}

export interface AnalyzeResult {
  design: DesignReport;
  rules: EffectiveRules;
}

// ---------------------------------------------------------------- plan and sweep jobs (docs/server.md, Jobs)

export type JobKind = 'plan' | 'sweep';
export type JobStatus = 'queued' | 'running' | 'done' | 'failed' | 'cancelled';
export type JobObjective = 'registers' | 'muxes' | 'latency';

/** What was asked. Plan: factor and units default to the design's. Sweep: factors and units. */
export interface JobParams {
  objective: JobObjective;
  timeLimitSeconds: number;
  factor?: number;
  /** Units per kind (plan: made or dropped per kind; sweep: fixed counts, or 'auto'). */
  units?: Record<string, number> | 'auto';
  factors?: number[];
}

/** The planner's own result types: the API sends them as the engine returns them. */
export type JobUnit = Unit;

export type JobPlanMetrics = PlanMetrics;

/** A plan as the engine returned it (shared/planning/types.ts). */
export type JobPlan = PlanResult;

/** The design's own plan, where it had one: what the new plan is compared with. */
export interface CurrentPlan {
  factor: number;
  units: JobUnit[];
  sets: Record<string, (string | null)[]>;
  /** Measured by the same engine; null when the design's own sets are partial or do not fold. */
  objective: JobPlanMetrics | null;
}

export type JobSweepRow = SweepRow;

export type JobResult =
  | { kind: 'plan'; plan: JobPlan; current: CurrentPlan | null; plannedText: string | null }
  | { kind: 'sweep'; rows: JobSweepRow[] };

export interface JobProgress {
  phase: string;
  done?: number;
  total?: number;
  at: string;
}

export interface JobAttempt {
  attempt: number;
  worker: string;
  outcome: 'running' | 'done' | 'failed' | 'cancelled' | 'lost';
  message: string | null;
  startedAt: string;
  endedAt: string | null;
}

/** A job in a list: everything but the design text and the result. */
export interface JobSummary {
  id: number;
  project: { slug: string; name: string };
  kind: JobKind;
  status: JobStatus;
  design: { file: string; name: string | null; runId: number | null };
  params: JobParams;
  progress: JobProgress | null;
  error: string | null;
  cancelRequested: boolean;
  createdBy: { id: number; name: string } | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
}

export interface JobDetail extends JobSummary {
  attempts: JobAttempt[];
  result: JobResult | null;
}

// ---------------------------------------------------------------- envelopes of single answers

/** GET /api/health (with the database) and /api/health/live (the process only). */
export interface Health {
  ok: boolean;
  database?: boolean;
}

export interface TokenList {
  tokens: CiToken[];
}

/** POST .../tokens: the secret is in this answer only. */
export interface TokenCreated {
  token: CiToken;
  secret: string;
}

export interface TokenAnswer {
  token: CiToken;
}

export interface JobStarted {
  job: JobSummary;
}

export interface JobList {
  jobs: JobSummary[];
}

export interface JobAnswer {
  job: JobDetail;
}

