// What the pull-request feedback asks of a git host, whichever host it is: the open pull/merge
// request of a branch, a commit status, and one comment to create, find and edit. GitHub goes
// through its SDK (github.ts), GitLab through its REST API (gitlab.ts); feedback.ts picks one.
import { Agent, fetch as undiciFetch } from 'undici';
import type { HostKind } from '../../../shared/report/api';
import { hostLookup, type HostAddressPolicy } from './address';

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
  /** Which addresses the calls may connect to (PLEAT_HOST_ALLOW, PLEAT_HOST_HTTP_LOOPBACK). */
  addressPolicy: HostAddressPolicy;
}

/** The name the commit status goes under on the host. */
export const STATUS_CONTEXT = 'pleat';

/**
 * fetch for one host connection: with a deadline (a host that does not answer costs at most
 * timeoutMs, never a hung task), and connecting only to addresses the policy allows, judged as
 * each socket connects (address.ts, hostLookup), so the token never goes to an address that was
 * not checked. undici's own fetch, since the built-in one takes no connection options.
 */
export function hostFetch(s: HostSettings): typeof fetch {
  const dispatcher = new Agent({ connect: { lookup: hostLookup(new URL(s.apiUrl).protocol, s.addressPolicy) } });
  const call = (input: Parameters<typeof undiciFetch>[0], init?: Parameters<typeof undiciFetch>[1]) =>
    undiciFetch(input, { ...init, dispatcher, signal: AbortSignal.timeout(s.timeoutMs) });
  return call as unknown as typeof fetch;
}
