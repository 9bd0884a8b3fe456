// HTTP client of the Pleat server for CI: upload a report, read the team rules and runs. Node's
// global fetch with a timeout per try; retries (p-retry) with exponential backoff and jitter on
// 429, 5xx and network failures only (a 400/401/403/413 will not change by asking again).
import pRetry from 'p-retry';

export interface ServerTarget {
  /** Base URL of the server, e.g. http://127.0.0.1:4180 (a path prefix is kept). */
  url: string;
  project: string;
  /** The project's CI token. Sent in the Authorization header, never printed. */
  token: string;
  /** A person's session cookie (`name=value`), sent instead of the token when set (`pleat diff --against`). */
  cookie?: string;
}

export interface RetryPolicy {
  /** Tries in all (1 = no retry). */
  tries: number;
  /** Delay before the first retry; doubles for each further one. */
  baseDelayMs: number;
  /** Longest wait between tries, also for a server's Retry-After. */
  maxDelayMs: number;
  /** Time allowed for one try, connection to the last byte. */
  timeoutMs: number;
}

export const DEFAULT_POLICY: RetryPolicy = { tries: 4, baseDelayMs: 1000, maxDelayMs: 30_000, timeoutMs: 30_000 };

/** The retry policy, with PLEAT_UPLOAD_TRIES / _BACKOFF_MS / _TIMEOUT_MS applied; bad values are problems. */
export function policyFromEnv(env: Record<string, string | undefined>): { policy: RetryPolicy; problems: string[] } {
  const problems: string[] = [];
  const int = (name: string, fallback: number, min: number, max: number): number => {
    const raw = env[name];
    if (raw === undefined || raw.trim() === '') return fallback;
    const n = Number(raw);
    if (!Number.isInteger(n) || n < min || n > max) {
      problems.push(`${name} must be an integer from ${min} to ${max}`);
      return fallback;
    }
    return n;
  };
  return {
    policy: {
      tries: int('PLEAT_UPLOAD_TRIES', DEFAULT_POLICY.tries, 1, 20),
      baseDelayMs: int('PLEAT_UPLOAD_BACKOFF_MS', DEFAULT_POLICY.baseDelayMs, 0, 600_000),
      maxDelayMs: DEFAULT_POLICY.maxDelayMs,
      timeoutMs: int('PLEAT_UPLOAD_TIMEOUT_MS', DEFAULT_POLICY.timeoutMs, 100, 3_600_000),
    },
    problems,
  };
}

export interface Success {
  ok: true;
  status: number;
  body: unknown;
  tries: number;
  /** The Set-Cookie values of the answer (a login's session). */
  cookies?: string[];
}

export interface Failure {
  ok: false;
  /** null when no HTTP answer came (connection refused, DNS, timeout). */
  status: number | null;
  /** The server's error code (`invalid-credentials`, ...) when it sent one. */
  code: string | null;
  /** One line for people: the status and the server's message, or what went wrong on the way. */
  message: string;
  retryable: boolean;
  tries: number;
  /** Seconds the server asked to wait (Retry-After), if it did. */
  retryAfterMs?: number;
}

export type Outcome = Success | Failure;

export interface Hooks {
  /** Told before each wait: which try failed, why, and how long until the next. */
  onRetry?: (failure: Failure, delayMs: number) => void;
  sleep?: (ms: number) => Promise<void>;
  random?: () => number;
  userAgent?: string;
}

/** Statuses worth asking again: too many requests and server-side failures. */
export function isRetryableStatus(status: number): boolean {
  return status === 429 || status >= 500;
}

/**
 * Delay before retry number `retry` (1-based): base x 2^(retry-1), capped, with "equal jitter"
 * (half fixed, half random) so that many CI jobs failing together do not come back together.
 */
export function backoffDelay(retry: number, policy: RetryPolicy, random: () => number = Math.random): number {
  const exp = Math.min(policy.maxDelayMs, policy.baseDelayMs * 2 ** (retry - 1));
  return Math.round(exp / 2 + random() * (exp / 2));
}

export function endpoint(base: string, path: string): string {
  return new URL(path, base.endsWith('/') ? base : `${base}/`).toString();
}

/** Printable text from a server: control characters out, one line, bounded. */
function clean(s: string, max = 300): string {
  // eslint-disable-next-line no-control-regex
  const one = s.replace(/[\x00-\x1f\x7f]+/g, ' ').trim();
  return one.length > max ? `${one.slice(0, max - 3)}...` : one;
}

function networkReason(err: unknown, timeoutMs: number): string {
  const e = err as { name?: string; message?: string; cause?: { code?: string; message?: string } };
  if (e?.name === 'TimeoutError' || e?.name === 'AbortError') return `no answer within ${(timeoutMs / 1000).toFixed(1)} s`;
  const code = e?.cause?.code;
  const known: Record<string, string> = {
    ECONNREFUSED: 'connection refused',
    ENOTFOUND: 'host not found',
    EAI_AGAIN: 'host name lookup failed',
    ECONNRESET: 'connection reset',
    ETIMEDOUT: 'connection timed out',
    EHOSTUNREACH: 'host unreachable',
    ENETUNREACH: 'network unreachable',
    UND_ERR_SOCKET: 'connection closed by the server',
    UND_ERR_CONNECT_TIMEOUT: 'connection timed out',
  };
  if (code && known[code]) return `${known[code]} (${code})`;
  return clean(e?.cause?.message ?? e?.message ?? String(err));
}

function retryAfter(header: string | null): number | undefined {
  if (!header) return undefined;
  const secs = Number(header);
  if (Number.isFinite(secs) && secs >= 0) return secs * 1000;
  const at = Date.parse(header);
  return Number.isFinite(at) ? Math.max(0, at - Date.now()) : undefined;
}

/** One try: an answer (any status) or a failure without one. */
async function once(method: 'GET' | 'POST', url: string, target: Pick<ServerTarget, 'token' | 'cookie'>, body: string | undefined, policy: RetryPolicy, hooks: Hooks): Promise<Outcome> {
  const origin = new URL(url).origin;
  let res: Response;
  let text: string;
  try {
    res = await fetch(url, {
      method,
      headers: {
        ...(target.cookie ? { Cookie: target.cookie } : target.token ? { Authorization: `Bearer ${target.token}` } : {}),
        Accept: 'application/json',
        'User-Agent': hooks.userAgent ?? 'pleat',
        ...(body !== undefined ? { 'Content-Type': 'application/json' } : {}),
      },
      body,
      // A redirect is reported, not followed: the token must go only where server.url says.
      redirect: 'manual',
      signal: AbortSignal.timeout(policy.timeoutMs),
    });
    text = await res.text();
  } catch (err) {
    return { ok: false, status: null, code: null, message: `cannot reach ${origin}: ${networkReason(err, policy.timeoutMs)}`, retryable: true, tries: 1 };
  }
  let json: unknown = null;
  try {
    json = text === '' ? null : JSON.parse(text);
  } catch {
    json = null;
  }
  if (res.status >= 300 && res.status < 400) {
    const to = res.headers.get('location');
    return { ok: false, status: res.status, code: null, message: `HTTP ${res.status} the server redirects${to ? ` to ${clean(to, 200)}` : ''}; set server.url (or PLEAT_SERVER_URL) to the address it names`, retryable: false, tries: 1 };
  }
  if (res.ok) {
    if (json === null) {
      // A proxy or another program answered in its place.
      return { ok: false, status: res.status, code: null, message: `HTTP ${res.status} from ${origin}, but the answer is not a Pleat server's (not JSON)`, retryable: false, tries: 1 };
    }
    return { ok: true, status: res.status, body: json, tries: 1, cookies: res.headers.getSetCookie() };
  }
  const err = (json as { error?: { code?: unknown; message?: unknown } } | null)?.error;
  const code = typeof err?.code === 'string' ? clean(err.code, 60) : null;
  const serverMessage = typeof err?.message === 'string' ? clean(err.message) : null;
  const what = serverMessage
    ? `${code ? `${code}: ` : ''}${serverMessage}`
    : `${res.statusText || 'no message'}${json === null && text ? ' (the answer is not JSON)' : ''}`;
  return {
    ok: false,
    status: res.status,
    code,
    message: `HTTP ${res.status} ${what}`,
    retryable: isRetryableStatus(res.status),
    tries: 1,
    retryAfterMs: retryAfter(res.headers.get('retry-after')),
  };
}

const defaultSleep = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

/** A failed try, as p-retry wants it: an Error that carries the outcome. */
class TryFailed extends Error {
  constructor(readonly outcome: Failure) {
    super(outcome.message);
  }
}

/**
 * Repeats a request while it fails in a retryable way, up to policy.tries, through p-retry.
 * The wait between tries stays ours (p-retry's own is set to 0): equal jitter, the server's
 * Retry-After up to the cap, and a sleep the tests can replace; it happens in shouldRetry,
 * which p-retry calls only when another try is left.
 */
async function withRetries(run: () => Promise<Outcome>, policy: RetryPolicy, hooks: Hooks): Promise<Outcome> {
  const sleep = hooks.sleep ?? defaultSleep;
  try {
    return await pRetry(
      async (attempt) => {
        const outcome = await run();
        outcome.tries = attempt;
        if (!outcome.ok) throw new TryFailed(outcome);
        return outcome;
      },
      {
        retries: policy.tries - 1,
        minTimeout: 0,
        maxTimeout: 0,
        shouldRetry: async ({ error, attemptNumber }) => {
          const failure = (error as TryFailed).outcome;
          if (!failure?.retryable) return false;
          let delay = backoffDelay(attemptNumber, policy, hooks.random);
          if (failure.retryAfterMs !== undefined) delay = Math.max(delay, Math.min(failure.retryAfterMs, policy.maxDelayMs));
          hooks.onRetry?.(failure, delay);
          await sleep(delay);
          return true;
        },
      },
    );
  } catch (err) {
    if (err instanceof TryFailed) return err.outcome;
    throw err;
  }
}

/** POST /api/projects/:slug/runs with the report's JSON text. 201 = stored, 200 = that commit was already stored. */
export function uploadReport(target: ServerTarget, reportJson: string, policy: RetryPolicy, hooks: Hooks = {}): Promise<Outcome> {
  const url = endpoint(target.url, `api/projects/${encodeURIComponent(target.project)}/runs`);
  return withRetries(() => once('POST', url, target, reportJson, policy, hooks), policy, hooks);
}

/** GET /api/projects/:slug/rules: the team's rules, as the server stores them (checked by the caller). */
export function fetchTeamRules(target: ServerTarget, policy: RetryPolicy, hooks: Hooks = {}): Promise<Outcome> {
  const url = endpoint(target.url, `api/projects/${encodeURIComponent(target.project)}/rules`);
  return withRetries(() => once('GET', url, target, undefined, policy, hooks), policy, hooks);
}

/** GET of an API path (`api/...`), with the token or the session of `target`. */
export function getJson(target: ServerTarget, apiPath: string, policy: RetryPolicy, hooks: Hooks = {}): Promise<Outcome> {
  const url = endpoint(target.url, apiPath);
  return withRetries(() => once('GET', url, target, undefined, policy, hooks), policy, hooks);
}

/** POST /api/auth/login: a person's session cookie (`name=value`) for reading runs, or the failure. */
export async function login(baseUrl: string, email: string, password: string, policy: RetryPolicy, hooks: Hooks = {}): Promise<{ cookie: string } | Failure> {
  const url = endpoint(baseUrl, 'api/auth/login');
  const out = await withRetries(() => once('POST', url, { token: '' }, JSON.stringify({ email, password }), policy, hooks), policy, hooks);
  if (!out.ok) return out;
  const cookie = (out.cookies ?? []).map((c) => c.split(';')[0]).find((c) => c.includes('='));
  if (!cookie) return { ok: false, status: out.status, code: null, message: `HTTP ${out.status} the login answer carries no session`, retryable: false, tries: out.tries };
  return { cookie };
}
