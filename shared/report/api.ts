// The JSON shapes of the server's API that both sides name: the server's presenters build them and
// the web report reads them. Types only. Times travel as ISO 8601 strings.
import type { Status } from '../types';

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
