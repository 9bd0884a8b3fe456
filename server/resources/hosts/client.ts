// What the pull-request feedback asks of a git host, whichever host it is: the open pull/merge
// request of a branch, a commit status, and one comment to create, find and edit. GitHub goes
// through its SDK (github.ts), GitLab through its REST API (gitlab.ts); feedback.ts picks one.
import type { HostKind } from '../../../shared/report/api';

export interface OpenRequest {
  /** GitHub: the pull request's number; GitLab: the merge request's iid. */
  number: number;
  url: string | null;
}

export type CommitState = 'success' | 'failure';

export interface HostClient {
  findOpenRequest(branch: string): Promise<OpenRequest | null>;
  postStatus(sha: string, state: CommitState, description: string, targetUrl: string): Promise<void>;
  /** 'gone' when the comment no longer exists (deleted by someone on the host). */
  updateComment(number: number, commentId: string, body: string): Promise<'ok' | 'gone'>;
  /** The id of the request's first comment that contains `marker`, or null. */
  findComment(number: number, marker: string): Promise<string | null>;
  createComment(number: number, body: string): Promise<string>;
}

export interface HostSettings {
  kind: HostKind;
  apiUrl: string;
  repository: string;
  token: string;
  timeoutMs: number;
}

/** The name the commit status goes under on the host. */
export const STATUS_CONTEXT = 'pleat';

/** fetch with a deadline: a host that does not answer costs at most `ms`, never a hung task. */
export function timedFetch(ms: number): typeof fetch {
  return (input, init) => fetch(input, { ...init, signal: AbortSignal.timeout(ms) });
}
