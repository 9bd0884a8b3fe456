// Server settings, read once from the environment. Every value has a default that works on a
// developer's machine with scripts/pg.sh; production sets the secrets and URLs explicitly.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { cleanEnv, EnvError, makeValidator } from 'envalid';

export type Env = 'development' | 'test' | 'production';

export interface Config {
  env: Env;
  root: string;
  host: string;
  port: number;
  databaseUrl: string;
  /** Postgres schema to use (search_path); tests give each worker its own. */
  dbSchema: string | null;
  dbPool: number;
  jwtSecret: string;
  sessionHours: number;
  cookieSecure: boolean;
  bcryptRounds: number;
  /** Address of the web app, used in links inside e-mail. */
  publicUrl: string;
  smtp: { host: string; port: number; from: string } | null;
  /** Folder of the fake SMTP server's .eml files, readable at /api/dev/mail in development. */
  devMailDir: string | null;
  webDir: string;
  maxReportBytes: number;
  maxDesignBytes: number;
  login: { windowMs: number; limit: number };
  trustProxy: boolean | number | string;
  invitationDays: number;
  /** Worker threads of the analysis pool (POST /api/analyze). */
  analyzeThreads: number;
  /** Nice value the analysis threads take (0 leaves them at the server's priority). */
  analyzeNice: number;
  /** Analyses per person per minute, and how long one may take. */
  analyze: { limit: number; timeoutMs: number };
  /** Uploads per CI token: a burst limit per minute and a quota per day. */
  upload: { perMinute: number; perDay: number };
  /** Seconds a client is told to wait (Retry-After) while the database is unreachable. */
  outageRetrySeconds: number;
  /** How often the clean-up of server/maintenance.ts runs; 0 turns it off. */
  maintenanceMs: number;
  jobs: JobSettings;
  /**
   * The AES-256-GCM key that encrypts git-host tokens at rest (PLEAT_SECRET_KEY: 32 bytes as 64 hex
   * digits or base64). Null in production when unset: then no project can be connected to a host.
   */
  secretKey: Buffer | null;
  /** How long one call to a git host may take before the pull-request feedback gives up on it. */
  hostTimeoutMs: number;
  /** Which git-host API addresses may be called (server/resources/hosts/address.ts): PLEAT_HOST_HTTP_LOOPBACK, PLEAT_HOST_ALLOW. */
  hostAddress: { httpLoopback: boolean; allow: string[] };
}

/** The plan and sweep jobs (docs/server.md, section Jobs). */
export interface JobSettings {
  /** PostgreSQL schema of pg-boss's own tables. */
  queueSchema: string;
  /** Seconds a job may run past its own time limit before the queue counts its worker as lost. */
  graceSeconds: number;
  /** How often a worker's supervisor looks for jobs of lost workers (pg-boss maintenance), seconds. */
  superviseSeconds: number;
  /** How often an idle worker asks for work, seconds. */
  pollSeconds: number;
  /** How many more times a job whose worker was lost is tried. */
  retries: number;
  /** Tests only: a worker waits this long after taking its first job, so a test can kill it mid-job. */
  holdMs: number;
}

const MiB = 1024 * 1024;

/**
 * The numeric settings, parsed by envalid: a bad value fails start-up with the variable's name
 * ("PLEAT_PORT: not a number: abc") instead of a bare "not a number: abc". Empty counts as unset.
 */
const num = makeValidator<number>((raw) => {
  // Stricter than envalid's own num(), which reads "12abc" as 12: the whole value must be a finite number.
  const n = Number(raw);
  if (!Number.isFinite(n)) throw new EnvError(`not a number: ${raw}`);
  return n;
});

/** A 256-bit key: 64 hex digits or the base64 of 32 bytes. */
const key32 = makeValidator<Buffer>((raw) => {
  const bytes = /^[0-9a-fA-F]{64}$/.test(raw) ? Buffer.from(raw, 'hex')
    : /^[A-Za-z0-9+/]{43}=?$/.test(raw) ? Buffer.from(raw, 'base64') : null;
  if (!bytes || bytes.length !== 32) throw new EnvError('must be 32 bytes, as 64 hex digits or base64 (openssl rand -hex 32)');
  return bytes;
});

function numbers(env: NodeJS.ProcessEnv) {
  const given = Object.fromEntries(Object.entries(env).filter(([, v]) => v !== undefined && v !== ''));
  return cleanEnv(given, {
    PLEAT_PORT: num({ default: 4180 }),
    PLEAT_PG_PORT: num({ default: 54329 }),
    PLEAT_SMTP_PORT: num({ default: 4125 }),
    PLEAT_DB_POOL: num({ default: 10 }),
    PLEAT_SESSION_HOURS: num({ default: 24 * 7 }),
    PLEAT_BCRYPT_ROUNDS: num({ default: 10 }),
    PLEAT_MAX_REPORT_MB: num({ default: 32 }),
    PLEAT_LOGIN_WINDOW_MIN: num({ default: 15 }),
    PLEAT_LOGIN_LIMIT: num({ default: 10 }),
    PLEAT_INVITATION_DAYS: num({ default: 7 }),
    PLEAT_ANALYZE_THREADS: num({ default: 0 }),
    // 0 to 19, as nice(1) takes them: a higher value yields more CPU to requests and PostgreSQL.
    PLEAT_ANALYZE_NICE: num({ default: 10, choices: Array.from({ length: 20 }, (_, i) => i) }),
    PLEAT_ANALYZE_LIMIT: num({ default: 30 }),
    PLEAT_ANALYZE_TIMEOUT_S: num({ default: 60 }),
    PLEAT_UPLOAD_LIMIT: num({ default: 120 }),
    PLEAT_UPLOAD_QUOTA: num({ default: 10_000 }),
    PLEAT_OUTAGE_RETRY_S: num({ default: 5 }),
    PLEAT_MAINTENANCE_MIN: num({ default: 10 }),
    PLEAT_JOB_GRACE_S: num({ default: 60 }),
    PLEAT_QUEUE_SUPERVISE_S: num({ default: 30 }),
    PLEAT_QUEUE_POLL_S: num({ default: 2 }),
    PLEAT_JOB_RETRIES: num({ default: 1 }),
    PLEAT_TEST_JOB_HOLD_MS: num({ default: 0 }),
    PLEAT_HOST_TIMEOUT_S: num({ default: 10 }),
    PLEAT_SECRET_KEY: key32({ default: undefined }),
  }, {
    reporter: ({ errors }) => {
      const bad = Object.entries(errors).map(([name, e]) => `${name}: ${e?.message ?? 'invalid'}`);
      if (bad.length) throw new Error(`server settings: ${bad.join('; ')}`);
    },
  });
}

/** In development the JWT secret (and the key of host tokens) is generated once and kept in .data/ (git-ignored). */
function devSecret(root: string, name = 'jwt-secret'): string {
  const dir = join(root, '.data');
  const file = join(dir, name);
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dir, { recursive: true });
  const secret = randomBytes(32).toString('hex');
  writeFileSync(file, secret + '\n', { mode: 0o600 });
  return secret;
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env, overrides: Partial<Config> = {}): Config {
  const root = resolve(env.PLEAT_ROOT ?? process.cwd());
  const mode: Env = env.PLEAT_ENV === 'production' || env.NODE_ENV === 'production'
    ? 'production'
    : env.PLEAT_ENV === 'test' ? 'test' : 'development';
  const n = numbers(env);
  const port = n.PLEAT_PORT;
  const pgPort = n.PLEAT_PG_PORT;
  let jwtSecret = env.PLEAT_JWT_SECRET ?? '';
  if (!jwtSecret) {
    if (mode === 'production') throw new Error('PLEAT_JWT_SECRET must be set in production');
    jwtSecret = devSecret(root);
  }
  const smtpPort = n.PLEAT_SMTP_PORT;
  const publicUrl = (env.PLEAT_PUBLIC_URL ?? `http://127.0.0.1:${port}`).replace(/\/+$/, '');
  const trust = env.PLEAT_TRUST_PROXY;
  return {
    env: mode,
    root,
    host: env.PLEAT_HOST ?? '127.0.0.1',
    port,
    databaseUrl: env.PLEAT_DATABASE_URL ?? `postgres://pleat@127.0.0.1:${pgPort}/pleat`,
    dbSchema: env.PLEAT_DB_SCHEMA || null,
    dbPool: n.PLEAT_DB_POOL,
    jwtSecret,
    sessionHours: n.PLEAT_SESSION_HOURS,
    cookieSecure: env.PLEAT_COOKIE_SECURE ? env.PLEAT_COOKIE_SECURE === '1' : publicUrl.startsWith('https:'),
    bcryptRounds: n.PLEAT_BCRYPT_ROUNDS,
    publicUrl,
    smtp: env.PLEAT_SMTP_HOST === 'none'
      ? null
      : { host: env.PLEAT_SMTP_HOST ?? '127.0.0.1', port: smtpPort, from: env.PLEAT_MAIL_FROM ?? 'Pleat <pleat@localhost>' },
    devMailDir: mode === 'development' ? join(root, '.data', 'mail') : null,
    webDir: resolve(root, env.PLEAT_WEB_DIR ?? 'dist/web'),
    maxReportBytes: n.PLEAT_MAX_REPORT_MB * MiB,
    maxDesignBytes: 16 * MiB,
    login: { windowMs: n.PLEAT_LOGIN_WINDOW_MIN * 60_000, limit: n.PLEAT_LOGIN_LIMIT },
    trustProxy: trust === undefined ? false : trust === 'true' ? true : /^\d+$/.test(trust) ? Number(trust) : trust,
    invitationDays: n.PLEAT_INVITATION_DAYS,
    analyzeThreads: n.PLEAT_ANALYZE_THREADS,
    analyzeNice: n.PLEAT_ANALYZE_NICE,
    analyze: { limit: n.PLEAT_ANALYZE_LIMIT, timeoutMs: n.PLEAT_ANALYZE_TIMEOUT_S * 1000 },
    upload: { perMinute: n.PLEAT_UPLOAD_LIMIT, perDay: n.PLEAT_UPLOAD_QUOTA },
    outageRetrySeconds: n.PLEAT_OUTAGE_RETRY_S,
    maintenanceMs: n.PLEAT_MAINTENANCE_MIN * 60_000,
    jobs: {
      queueSchema: env.PLEAT_QUEUE_SCHEMA || (env.PLEAT_DB_SCHEMA ? `${env.PLEAT_DB_SCHEMA}_queue` : 'pleat_queue'),
      graceSeconds: n.PLEAT_JOB_GRACE_S,
      superviseSeconds: n.PLEAT_QUEUE_SUPERVISE_S,
      pollSeconds: n.PLEAT_QUEUE_POLL_S,
      retries: n.PLEAT_JOB_RETRIES,
      holdMs: mode === 'test' ? n.PLEAT_TEST_JOB_HOLD_MS : 0,
    },
    // Production gets no made-up key: a key that is lost with the machine loses every stored token.
    secretKey: n.PLEAT_SECRET_KEY ?? (mode === 'development' ? Buffer.from(devSecret(root, 'secret-key'), 'hex') : null),
    hostTimeoutMs: n.PLEAT_HOST_TIMEOUT_S * 1000,
    hostAddress: { httpLoopback: env.PLEAT_HOST_HTTP_LOOPBACK === '1', allow: (env.PLEAT_HOST_ALLOW ?? '').split(',').map((s) => s.trim()).filter(Boolean) },
    ...overrides,
  };
}
