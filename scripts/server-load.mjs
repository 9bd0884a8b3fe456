// The set-up that the server benchmark (scripts/bench-server.mjs) and the load phase of the chaos
// campaign (scripts/chaos-load.mjs) share: a fresh database on the private PostgreSQL, the bundled
// server built, migrated and started on a free loopback port, a project with a viewer and a CI
// token, a session cookie, and autocannon runs that keep every response time (exact quantiles).
import { execFileSync, spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { createServer } from 'node:net';
import autocannon from 'autocannon';
import bcrypt from 'bcryptjs';
import pg from 'pg';

/**
 * The URL maker of the private PostgreSQL's databases (PLEAT_PG_PORT, default 54329); scripts/pg.sh
 * starts it only when nothing answers there (another checkout may be running it).
 */
export async function postgres(root) {
  const pgUrl = (db) => `postgres://pleat@127.0.0.1:${process.env.PLEAT_PG_PORT ?? 54329}/${db}`;
  try {
    const probe = new pg.Client({ connectionString: pgUrl('postgres') });
    await probe.connect();
    await probe.end();
  } catch {
    execFileSync('bash', ['scripts/pg.sh'], { cwd: root, stdio: ['ignore', 'ignore', 'inherit'] });
  }
  return pgUrl;
}

async function admin(pgUrl, sql) {
  const c = new pg.Client({ connectionString: pgUrl('postgres') });
  await c.connect();
  try {
    for (const s of sql) await c.query(s);
  } finally {
    await c.end();
  }
}

/** Drops and creates the database `name`; returns its URL. */
export async function freshDatabase(pgUrl, name) {
  await admin(pgUrl, [`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`, `CREATE DATABASE ${name}`]);
  return pgUrl(name);
}

export function dropDatabase(pgUrl, name) {
  return admin(pgUrl, [`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`]);
}

/** The environment of a production server on `dbUrl` with the limits out of the way of a load test. */
export function serverEnv(root, dbUrl, secret, limits = {}) {
  return {
    ...process.env,
    PLEAT_ENV: 'production',
    PLEAT_DATABASE_URL: dbUrl,
    PLEAT_JWT_SECRET: secret,
    PLEAT_SMTP_HOST: 'none',
    PLEAT_LOGIN_LIMIT: '1000000',
    PLEAT_UPLOAD_LIMIT: limits.perMinute ?? '1000000000',
    PLEAT_UPLOAD_QUOTA: limits.perDay ?? '1000000000',
    PLEAT_MAINTENANCE_MIN: '0',
    PLEAT_ROOT: root,
  };
}

/** Bundles the server (dist/server) and applies the migrations to the environment's database. */
export function buildAndMigrate(root, env) {
  execFileSync(process.execPath, ['scripts/build.mjs', '--server-only'], { cwd: root, stdio: 'inherit' });
  execFileSync(process.execPath, ['dist/server/main.js', 'migrate'], { cwd: root, env, stdio: ['ignore', 'ignore', 'inherit'] });
}

/**
 * A project `slug` with empty team rules, one viewer (`viewer@<slug>.test`, `password`) and one CI
 * token (`token`); `client` is a connected pg client of the database.
 */
export async function seedProject(client, { slug, name, password, token }) {
  const { rows: [project] } = await client.query(`INSERT INTO projects (slug, name) VALUES ($1, $2) RETURNING id`, [slug, name]);
  await client.query(`INSERT INTO team_rules (project_id, rules) VALUES ($1, '{}')`, [project.id]);
  const email = `viewer@${slug}.test`;
  const { rows: [user] } = await client.query(
    `INSERT INTO users (email, name, password_hash) VALUES ($1, 'Viewer', $2) RETURNING id`, [email, bcrypt.hashSync(password, 4)]);
  await client.query(`INSERT INTO memberships (project_id, user_id, role) VALUES ($1, $2, 'viewer')`, [project.id, user.id]);
  await client.query(`INSERT INTO ci_tokens (project_id, name, token_hash, prefix) VALUES ($1, $2, $3, $4)`,
    [project.id, slug, createHash('sha256').update(token).digest('hex'), `pleat_ci_${slug}`]);
  return { projectId: project.id, userId: user.id, email };
}

function freePort() {
  return new Promise((resolve) => {
    const s = createServer();
    s.listen(0, '127.0.0.1', () => {
      const p = s.address().port;
      s.close(() => resolve(p));
    });
  });
}

/** Starts `dist/server/main.js serve` (with `nodeArgs` for node, e.g. --cpu-prof) and waits for its liveness route; `log()` is what it wrote on standard error. */
export async function startServer(root, env, { nodeArgs = [] } = {}) {
  const port = await freePort();
  const server = spawn(process.execPath, [...nodeArgs, 'dist/server/main.js', 'serve'], {
    cwd: root, env: { ...env, PLEAT_PORT: String(port), PLEAT_MIGRATE: '0' }, stdio: ['ignore', 'ignore', 'pipe'],
  });
  let log = '';
  server.stderr.setEncoding('utf8').on('data', (d) => {
    log += d;
    process.stderr.write(d);
  });
  const base = `http://127.0.0.1:${port}`;
  for (let i = 0; i < 100; i++) {
    try {
      if ((await fetch(`${base}/api/health/live`)).ok) break;
    } catch {
      /* not yet */
    }
    await new Promise((r) => setTimeout(r, 100));
  }
  const stop = () => {
    server.kill('SIGTERM');
    return new Promise((resolve) => server.once('exit', resolve));
  };
  return { base, server, stop, log: () => log };
}

/** Signs in and returns the session cookie. */
export async function loginCookie(base, email, password) {
  const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, password }) });
  if (!login.ok) throw new Error(`login failed: ${login.status}`);
  return login.headers.get('set-cookie').split(';')[0];
}

/**
 * One autocannon run of `request` (always the `requests` form: autocannon applies setupRequest
 * and keeps the path only there); every response time is kept, so the quantiles are exact.
 * `errors` counts socket errors, timeouts and every status outside 2xx.
 */
export async function load(base, { connections, duration, request }) {
  const times = [];
  const statuses = new Map();
  const instance = autocannon({ url: base, connections, duration, requests: [{ method: 'GET', ...request }] });
  instance.on('response', (_c, status, _bytes, ms) => {
    times.push(ms);
    statuses.set(status, (statuses.get(status) ?? 0) + 1);
  });
  const r = await instance;
  times.sort((a, b) => a - b);
  const q = (p) => times[Math.min(times.length - 1, Math.floor(p * times.length))] ?? NaN;
  const bad = [...statuses].filter(([c]) => c < 200 || c >= 300).reduce((a, [, n]) => a + n, 0);
  return {
    connections, requests: times.length, perSecond: times.length / duration, p50: q(0.5), p95: q(0.95), p99: q(0.99),
    errors: r.errors + r.timeouts + bad, statuses: Object.fromEntries(statuses),
  };
}
