// The one API client of the web report: every request to the server goes through `request`.
// Cookies carry the session (http-only), so every call sends credentials; errors come back
// from the server as {error:{code,message}} and leave here as ApiError with that code.

import type {
  AnalyzeResult,
  JobKind,
  JobObjective,
  ApiErrorBody,
  BranchList,
  HostConnection,
  HostKind,
  Invitation,
  InvitationAccepted,
  Me,
  Member,
  Project,
  PublicUser,
  Role,
  RuleHistory,
  RunDetail,
  RunPage,
  TeamRules,
  TeamRuleSet,
  TokenAnswer,
  TokenCreated,
  TokenList,
  JobAnswer,
  JobList,
  JobStarted,
  WatchState,
} from './types';

export class ApiError extends Error {
  override readonly name = 'ApiError';
  constructor(
    /** HTTP status; 0 when the server could not be reached. */
    readonly status: number,
    /** The server's stable error code, e.g. 'unauthorized', 'forbidden', 'not-found'. */
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
  get isUnauthorized(): boolean {
    return this.status === 401;
  }
  get isForbidden(): boolean {
    return this.status === 403;
  }
  get isNotFound(): boolean {
    return this.status === 404;
  }
}

export function isApiError(e: unknown): e is ApiError {
  return e instanceof ApiError;
}

/** A message a person can read, whatever was thrown. */
export function errorMessage(e: unknown): string {
  if (e instanceof ApiError) return e.message;
  if (e instanceof Error) return e.message;
  return String(e);
}

type Query = Record<string, string | number | boolean | null | undefined>;

export interface RequestOptions {
  method?: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  query?: Query;
  /** A plain object is sent as JSON; FormData is sent as multipart. */
  body?: unknown;
  signal?: AbortSignal;
}

export function buildUrl(path: string, query?: Query): string {
  if (!query) return path;
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) {
    if (v === undefined || v === null || v === '') continue;
    params.set(k, String(v));
  }
  const s = params.toString();
  return s ? `${path}?${s}` : path;
}

export async function request<T>(path: string, opts: RequestOptions = {}): Promise<T> {
  const headers: Record<string, string> = { Accept: 'application/json' };
  let body: BodyInit | undefined;
  if (opts.body instanceof FormData) {
    body = opts.body; // the browser sets the multipart boundary itself
  } else if (opts.body !== undefined) {
    headers['Content-Type'] = 'application/json';
    body = JSON.stringify(opts.body);
  }
  let res: Response;
  try {
    res = await fetch(buildUrl(path, opts.query), {
      method: opts.method ?? (body === undefined ? 'GET' : 'POST'),
      headers,
      body,
      credentials: 'same-origin',
      signal: opts.signal,
    });
  } catch (e) {
    if (e instanceof DOMException && e.name === 'AbortError') throw e;
    throw new ApiError(0, 'network', 'The Pleat server could not be reached. Check your connection and try again.');
  }
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  let data: unknown = undefined;
  if (text) {
    try {
      data = JSON.parse(text);
    } catch {
      data = undefined;
    }
  }
  if (!res.ok) {
    const err = (data as Partial<ApiErrorBody> | undefined)?.error as Partial<ApiErrorBody['error']> | undefined;
    throw new ApiError(
      res.status,
      err?.code ?? `http_${res.status}`,
      err?.message ?? defaultMessage(res.status),
      err?.details,
    );
  }
  if (data === undefined && text) {
    throw new ApiError(res.status, 'bad_response', 'The server sent a response that is not JSON.');
  }
  return data as T;
}

function defaultMessage(status: number): string {
  if (status === 401) return 'Please sign in.';
  if (status === 403) return 'Your role does not allow this.';
  if (status === 404) return 'Not found.';
  if (status === 413) return 'The file is too large.';
  if (status === 429) return 'Too many requests; wait a moment and try again.';
  if (status >= 500) return 'The server failed to answer. Try again in a moment.';
  return `The request failed (HTTP ${status}).`;
}

// ---------------------------------------------------------------- endpoints (server/resources/*/routes.ts)


const seg = encodeURIComponent;

export const api = {
  // auth
  login: (email: string, password: string) => request<Me>('/api/auth/login', { method: 'POST', body: { email, password } }),
  logout: () => request<void>('/api/auth/logout', { method: 'POST' }),
  me: (signal?: AbortSignal) => request<Me>('/api/auth/me', { signal }),

  // projects, branches, runs
  projects: (signal?: AbortSignal) => request<{ projects: Project[] }>('/api/projects', { signal }),
  project: (slug: string, signal?: AbortSignal) => request<{ project: Project }>(`/api/projects/${seg(slug)}`, { signal }),
  createProject: (body: { slug: string; name: string; baseBranch?: string }) =>
    request<{ project: Project }>('/api/projects', { method: 'POST', body }),
  updateProject: (slug: string, body: { name?: string; baseBranch?: string; regressionTolerance?: number; branchRunDays?: number | null; reason?: string }) =>
    request<{ project: Project }>(`/api/projects/${seg(slug)}`, { method: 'PATCH', body }),
  deleteProject: (slug: string, confirm: string) => request<void>(`/api/projects/${seg(slug)}`, { method: 'DELETE', body: { confirm } }),
  branches: (slug: string, signal?: AbortSignal) => request<BranchList>(`/api/projects/${seg(slug)}/branches`, { signal }),
  runs: (slug: string, branch: string, o: { cursor?: string | null; offset?: number; limit?: number; design?: string | null } = {}, signal?: AbortSignal) =>
    request<RunPage>(`/api/projects/${seg(slug)}/branches/${seg(branch)}/runs`, {
      query: { cursor: o.cursor, offset: o.offset || undefined, limit: o.limit, design: o.design },
      signal,
    }),
  run: (id: number, signal?: AbortSignal) => request<RunDetail>(`/api/runs/${id}`, { signal }),

  // rules
  rules: (slug: string, signal?: AbortSignal) => request<TeamRules>(`/api/projects/${seg(slug)}/rules`, { signal }),
  saveRules: (slug: string, rules: TeamRuleSet, reason?: string) =>
    request<TeamRules & { changed: string[] }>(`/api/projects/${seg(slug)}/rules`, { method: 'PUT', body: { rules, ...(reason ? { reason } : {}) } }),
  revertRules: (slug: string, to: number, reason?: string) =>
    request<TeamRules & { changed: string[] }>(`/api/projects/${seg(slug)}/rules/revert`, { method: 'POST', body: { to, ...(reason ? { reason } : {}) } }),
  ruleHistory: (slug: string, before?: number | null, signal?: AbortSignal) =>
    request<RuleHistory>(`/api/projects/${seg(slug)}/rules/history`, { query: { before }, signal }),

  // CI tokens
  tokens: (slug: string, signal?: AbortSignal) => request<TokenList>(`/api/projects/${seg(slug)}/tokens`, { signal }),
  createToken: (slug: string, name: string) =>
    request<TokenCreated>(`/api/projects/${seg(slug)}/tokens`, { method: 'POST', body: { name } }),
  revokeToken: (slug: string, id: number) => request<TokenAnswer>(`/api/projects/${seg(slug)}/tokens/${id}`, { method: 'DELETE' }),

  // the git host of the pull-request feedback (leads)
  host: (slug: string, signal?: AbortSignal) => request<{ host: HostConnection | null }>(`/api/projects/${seg(slug)}/host`, { signal }),
  saveHost: (slug: string, body: { kind: HostKind; apiUrl?: string; repository: string; token?: string }) =>
    request<{ host: HostConnection }>(`/api/projects/${seg(slug)}/host`, { method: 'PUT', body }),
  removeHost: (slug: string) => request<void>(`/api/projects/${seg(slug)}/host`, { method: 'DELETE' }),

  // members and invitations
  members: (slug: string, signal?: AbortSignal) => request<{ members: Member[] }>(`/api/projects/${seg(slug)}/members`, { signal }),
  addMember: (slug: string, email: string, role: Role) =>
    request<{ member?: Member; invitation?: Invitation }>(`/api/projects/${seg(slug)}/members`, { method: 'POST', body: { email, role } }),
  setMemberRole: (slug: string, userId: number, role: Role) =>
    request<{ member: Member }>(`/api/projects/${seg(slug)}/members/${userId}`, { method: 'PATCH', body: { role } }),
  removeMember: (slug: string, userId: number) => request<void>(`/api/projects/${seg(slug)}/members/${userId}`, { method: 'DELETE' }),
  invitations: (slug: string, signal?: AbortSignal) =>
    request<{ invitations: Invitation[] }>(`/api/projects/${seg(slug)}/invitations`, { signal }),
  cancelInvitation: (slug: string, id: number) => request<void>(`/api/projects/${seg(slug)}/invitations/${id}`, { method: 'DELETE' }),
  invitation: (token: string, signal?: AbortSignal) =>
    request<{ invitation: Invitation; accountExists: boolean }>(`/api/invitations/${seg(token)}`, { signal }),
  acceptInvitation: (token: string, body: { name?: string; password?: string }) =>
    request<InvitationAccepted>(`/api/invitations/${seg(token)}/accept`, { method: 'POST', body }),

  // users (admins)
  users: (signal?: AbortSignal) => request<{ users: PublicUser[] }>('/api/users', { signal }),
  inviteUser: (body: { email: string; name?: string; isAdmin?: boolean }) =>
    request<{ user?: PublicUser; invitation?: Invitation }>('/api/users', { method: 'POST', body }),
  updateUser: (id: number, body: { name?: string; isAdmin?: boolean; active?: boolean }) =>
    request<{ user: PublicUser }>(`/api/users/${id}`, { method: 'PATCH', body }),

  // watches
  watch: (slug: string, branch: string) =>
    request<WatchState>(`/api/projects/${seg(slug)}/branches/${seg(branch)}/watch`, { method: 'PUT' }),
  unwatch: (slug: string, branch: string) =>
    request<WatchState>(`/api/projects/${seg(slug)}/branches/${seg(branch)}/watch`, { method: 'DELETE' }),

  // try a design: the file goes as multipart field `design`; `project` applies that project's team rules
  analyze: (file: Blob, fileName: string, project?: string | null) => {
    const form = new FormData();
    form.append('design', file, fileName);
    if (project) form.append('project', project);
    return request<AnalyzeResult>('/api/analyze', { method: 'POST', body: form });
  },

  // plan and sweep jobs (server/resources/jobs/routes.ts)
  startJob: (slug: string, body: StartJob) => request<JobStarted>(`/api/projects/${seg(slug)}/jobs`, { method: 'POST', body }),
  jobs: (slug: string, signal?: AbortSignal) => request<JobList>(`/api/projects/${seg(slug)}/jobs`, { signal }),
  job: (id: number, signal?: AbortSignal) => request<JobAnswer>(`/api/jobs/${id}`, { signal }),
  cancelJob: (id: number) => request<JobAnswer>(`/api/jobs/${id}/cancel`, { method: 'POST' }),
};

/** The run page's downloads (GET /api/runs/:id/download/:file): plain links, the session cookie goes along. */
export type RunDownload = 'report.json' | 'edges.csv' | 'schedule.csv' | 'rtl.zip';
export function downloadUrl(runId: number, file: RunDownload, design?: string): string {
  return buildUrl(`/api/runs/${runId}/download/${file}`, { design });
}

/** What starts a job: the design from a stored run (by design name) or as text, and the settings. */
export interface StartJob {
  kind: JobKind;
  design: { runId: number; name: string } | { text: string; file?: string };
  objective?: JobObjective;
  timeLimitSeconds?: number;
  factor?: number;
  units?: Record<string, number> | 'auto';
  factors?: number[];
}

