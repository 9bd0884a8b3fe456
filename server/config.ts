// Server settings, read once from the environment. Every value has a default that works on a
// developer's machine with scripts/pg.sh; production sets the secrets and URLs explicitly.
import { randomBytes } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';

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
  jobs: JobSettings;
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

function num(value: string | undefined, fallback: number): number {
  if (value === undefined || value === '') return fallback;
  const n = Number(value);
  if (!Number.isFinite(n)) throw new Error(`not a number: ${value}`);
  return n;
}

/** In development the JWT secret is generated once and kept in .data/ (git-ignored). */
function devSecret(root: string): string {
  const dir = join(root, '.data');
  const file = join(dir, 'jwt-secret');
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
  const port = num(env.PLEAT_PORT, 4180);
  const pgPort = num(env.PLEAT_PG_PORT, 54329);
  let jwtSecret = env.PLEAT_JWT_SECRET ?? '';
  if (!jwtSecret) {
    if (mode === 'production') throw new Error('PLEAT_JWT_SECRET must be set in production');
    jwtSecret = devSecret(root);
  }
  const smtpPort = num(env.PLEAT_SMTP_PORT, 4125);
  const publicUrl = (env.PLEAT_PUBLIC_URL ?? `http://127.0.0.1:${port}`).replace(/\/+$/, '');
  const trust = env.PLEAT_TRUST_PROXY;
  return {
    env: mode,
    root,
    host: env.PLEAT_HOST ?? '127.0.0.1',
    port,
    databaseUrl: env.PLEAT_DATABASE_URL ?? `postgres://pleat@127.0.0.1:${pgPort}/pleat`,
    dbSchema: env.PLEAT_DB_SCHEMA || null,
    dbPool: num(env.PLEAT_DB_POOL, 10),
    jwtSecret,
    sessionHours: num(env.PLEAT_SESSION_HOURS, 24 * 7),
    cookieSecure: env.PLEAT_COOKIE_SECURE ? env.PLEAT_COOKIE_SECURE === '1' : publicUrl.startsWith('https:'),
    bcryptRounds: num(env.PLEAT_BCRYPT_ROUNDS, 10),
    publicUrl,
    smtp: env.PLEAT_SMTP_HOST === 'none'
      ? null
      : { host: env.PLEAT_SMTP_HOST ?? '127.0.0.1', port: smtpPort, from: env.PLEAT_MAIL_FROM ?? 'Pleat <pleat@localhost>' },
    devMailDir: mode === 'development' ? join(root, '.data', 'mail') : null,
    webDir: resolve(root, env.PLEAT_WEB_DIR ?? 'dist/web'),
    maxReportBytes: num(env.PLEAT_MAX_REPORT_MB, 32) * MiB,
    maxDesignBytes: 16 * MiB,
    login: { windowMs: num(env.PLEAT_LOGIN_WINDOW_MIN, 15) * 60_000, limit: num(env.PLEAT_LOGIN_LIMIT, 10) },
    trustProxy: trust === undefined ? false : trust === 'true' ? true : /^\d+$/.test(trust) ? Number(trust) : trust,
    invitationDays: num(env.PLEAT_INVITATION_DAYS, 7),
    jobs: {
      queueSchema: env.PLEAT_QUEUE_SCHEMA || (env.PLEAT_DB_SCHEMA ? `${env.PLEAT_DB_SCHEMA}_queue` : 'pleat_queue'),
      graceSeconds: num(env.PLEAT_JOB_GRACE_S, 60),
      superviseSeconds: num(env.PLEAT_QUEUE_SUPERVISE_S, 30),
      pollSeconds: num(env.PLEAT_QUEUE_POLL_S, 2),
      retries: num(env.PLEAT_JOB_RETRIES, 1),
      holdMs: mode === 'test' ? num(env.PLEAT_TEST_JOB_HOLD_MS, 0) : 0,
    },
    ...overrides,
  };
}
