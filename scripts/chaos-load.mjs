#!/usr/bin/env node
// Load on loopback for a bounded time (part of `npm run chaos`, not of `npm test`): one bundled
// server process, CI uploads and history reads at once at 10 and then 50 connections, then the
// bare liveness route (GET /api/health/live: no database, no session) at the same connection
// count right after, as the baseline of the same server in the same run. Counts every error
// (socket errors, timeouts, any status but 2xx) and writes the figures into docs/reliability.md.
// Options: --duration S (seconds per phase, default 10), --no-docs.
import { execFileSync, spawn } from 'node:child_process';
import { randomBytes, createHash } from 'node:crypto';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { cpus, loadavg } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import autocannon from 'autocannon';
import bcrypt from 'bcryptjs';
import pg from 'pg';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const argv = process.argv.slice(2);
const opt = (name, dflt) => { const i = argv.indexOf(name); return i >= 0 ? argv[i + 1] : dflt; };
const DURATION = Number(opt('--duration', 10));
const WRITE_DOCS = !argv.includes('--no-docs');
const say = (m) => process.stderr.write(`chaos-load: ${m}\n`);
const loadAtStart = loadavg()[0];

// The PostgreSQL the tests use (PLEAT_PG_PORT, default 54329); scripts/pg.sh starts it when it is not up.
const pgUrl = (db) => `postgres://pleat@127.0.0.1:${process.env.PLEAT_PG_PORT ?? 54329}/${db}`;
try {
  const probe = new pg.Client({ connectionString: pgUrl('postgres') });
  await probe.connect();
  await probe.end();
} catch {
  execFileSync('bash', ['scripts/pg.sh'], { cwd: root, stdio: ['ignore', 'ignore', 'inherit'] });
}
const DB = 'pleat_chaos';
{
  const admin = new pg.Client({ connectionString: pgUrl('postgres') });
  await admin.connect();
  await admin.query(`DROP DATABASE IF EXISTS ${DB} WITH (FORCE)`);
  await admin.query(`CREATE DATABASE ${DB}`);
  await admin.end();
}
const dbUrl = pgUrl(DB);
execFileSync(process.execPath, ['scripts/build.mjs', '--server-only'], { cwd: root, stdio: 'inherit' });
const env = {
  ...process.env, PLEAT_ENV: 'production', PLEAT_DATABASE_URL: dbUrl, PLEAT_JWT_SECRET: 'chaos-only-secret', PLEAT_SMTP_HOST: 'none',
  PLEAT_LOGIN_LIMIT: '1000000', PLEAT_UPLOAD_LIMIT: '100000000', PLEAT_UPLOAD_QUOTA: '100000000', PLEAT_MAINTENANCE_MIN: '0', PLEAT_ROOT: root,
};
execFileSync(process.execPath, ['dist/server/main.js', 'migrate'], { cwd: root, env, stdio: ['ignore', 'ignore', 'inherit'] });

const client = new pg.Client({ connectionString: dbUrl });
await client.connect();
const { rows: [project] } = await client.query(`INSERT INTO projects (slug, name) VALUES ('chaos', 'Chaos') RETURNING id`);
await client.query(`INSERT INTO team_rules (project_id, rules) VALUES ($1, '{}')`, [project.id]);
const password = 'chaos password';
const { rows: [user] } = await client.query(
  `INSERT INTO users (email, name, password_hash) VALUES ('viewer@chaos.test', 'Viewer', $1) RETURNING id`, [bcrypt.hashSync(password, 4)]);
await client.query(`INSERT INTO memberships (project_id, user_id, role) VALUES ($1, $2, 'viewer')`, [project.id, user.id]);
const token = `pleat_ci_${randomBytes(32).toString('base64url')}`;
await client.query(`INSERT INTO ci_tokens (project_id, name, token_hash, prefix) VALUES ($1, 'chaos', $2, 'pleat_ci_chaos')`,
  [project.id, createHash('sha256').update(token).digest('hex')]);
await client.end();

// A report of the CLI's shape with three designs; each upload gets a new commit.
const design = (name) => ({
  file: `hw/${name}.fold.yaml`, name, status: 'pass', diagnostics: [], violations: [], factor: 4,
  edges: [{ from: 'a', to: 'b', delays: 1, foldedDelay: 3 }], retiming: { needed: false, feasible: true },
  utilization: { overall: 0.75, units: {} }, registers: { perEdge: 3, delayLines: 3, minimum: 2 },
});
const reportFor = (commit) => JSON.stringify({
  format: 'pleat-report/1', tool: { name: 'pleat', version: 'chaos' }, git: { branch: 'main', commit }, verdict: 'pass', rules: {},
  designs: ['a', 'b', 'c'].map(design),
});

const port = await new Promise((resolve) => { const s = createServer(); s.listen(0, '127.0.0.1', () => { const p = s.address().port; s.close(() => resolve(p)); }); });
const server = spawn(process.execPath, ['dist/server/main.js', 'serve'], { cwd: root, env: { ...env, PLEAT_PORT: String(port), PLEAT_MIGRATE: '0' }, stdio: ['ignore', 'ignore', 'pipe'] });
let serverLog = '';
server.stderr.setEncoding('utf8').on('data', (d) => { serverLog += d; });
const base = `http://127.0.0.1:${port}`;
for (let i = 0; i < 100; i++) {
  try { if ((await fetch(`${base}/api/health/live`)).ok) break; } catch { /* not yet */ }
  await new Promise((r) => setTimeout(r, 100));
}
const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'viewer@chaos.test', password }) });
if (!login.ok) throw new Error(`login failed: ${login.status}`);
const cookie = login.headers.get('set-cookie').split(';')[0];
// Some history to read before the first phase.
for (let i = 0; i < 60; i++) {
  await fetch(`${base}/api/projects/chaos/runs`, { method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` }, body: reportFor(randomBytes(20).toString('hex')) });
}

function run(name, connections, request) {
  const times = [];
  const statuses = new Map();
  const instance = autocannon({ url: base, connections, duration: DURATION, requests: [request] });
  instance.on('response', (_c, status, _bytes, ms) => {
    times.push(ms);
    statuses.set(status, (statuses.get(status) ?? 0) + 1);
  });
  return instance.then((r) => {
    times.sort((a, b) => a - b);
    const q = (p) => times[Math.min(times.length - 1, Math.floor(p * times.length))] ?? NaN;
    const bad = [...statuses].filter(([c]) => c < 200 || c >= 300).reduce((a, [, n]) => a + n, 0);
    return { name, connections, requests: times.length, perSecond: times.length / DURATION, p50: q(0.5), p95: q(0.95), errors: r.errors + r.timeouts + bad, statuses: Object.fromEntries(statuses) };
  });
}

const uploadReq = {
  method: 'POST', path: '/api/projects/chaos/runs',
  headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` },
  setupRequest: (req) => ({ ...req, body: reportFor(randomBytes(20).toString('hex')) }),
};
const historyReq = { method: 'GET', path: '/api/projects/chaos/branches/main/runs?limit=50', headers: { cookie } };
const bareReq = { method: 'GET', path: '/api/health/live' };

const results = [];
for (const c of [10, 50]) {
  say(`${c} connections: uploads and history reads at once for ${DURATION} s`);
  const half = Math.max(1, Math.floor(c / 2));
  const [up, hist] = await Promise.all([run('uploads', half, uploadReq), run('history page', c - half, historyReq)]);
  say(`${c} connections: the bare route for ${DURATION} s`);
  const bare = await run('bare route', c, bareReq);
  for (const r of [up, hist, bare]) say(`  ${r.name}: ${r.perSecond.toFixed(0)}/s, p95 ${r.p95.toFixed(1)} ms, errors ${r.errors} ${JSON.stringify(r.statuses)}`);
  results.push({ connections: c, up, hist, bare });
}
server.kill('SIGTERM');
await new Promise((r) => server.once('exit', r));
const stackTraces = (serverLog.match(/\n\s+at /g) ?? []).length;

const rows = results.flatMap(({ connections, up, hist, bare }) => [up, hist].map((r) =>
  `| ${connections} | ${r.name} (${r.connections} conn.) | ${r.requests} | ${r.perSecond.toFixed(0)}/s | ${r.errors} | ${r.p95.toFixed(1)} ms | ${bare.p95.toFixed(1)} ms | ${(r.p95 / bare.p95).toFixed(1)} |`));
const totalErrors = results.reduce((a, r) => a + r.up.errors + r.hist.errors + r.bare.errors, 0);
const section = [
  '<!-- chaos-load:start (written by scripts/chaos-load.mjs) -->',
  `Measured ${new Date().toISOString().slice(0, 10)}: one bundled server process and PostgreSQL on loopback, ${cpus().length} cores`,
  `shared with other work (load average ${loadAtStart.toFixed(1)} at the start), ${DURATION} s per phase. Uploads (a`,
  'report of three designs, a new commit each) and history pages (50 runs) run at once on the',
  'connections shown; the bare liveness route then runs alone on all of them, as the baseline of',
  'the same server in the same run. Errors are socket errors, timeouts and any answer but 2xx.',
  '',
  '| connections | requests | answered | throughput | errors | p95 | bare route p95 | ratio |',
  '| --- | --- | --- | --- | --- | --- | --- | --- |',
  ...rows,
  '',
  `Errors in total: ${totalErrors}. Stack traces in the server's log: ${stackTraces}.`,
  '<!-- chaos-load:end -->',
].join('\n');
console.log(section);
if (WRITE_DOCS) {
  const file = path.join(root, 'docs/reliability.md');
  const text = existsSync(file) ? readFileSync(file, 'utf8') : '';
  const re = /<!-- chaos-load:start[\s\S]*?<!-- chaos-load:end -->/;
  if (re.test(text)) writeFileSync(file, text.replace(re, section));
  else say('docs/reliability.md has no chaos-load markers; figures printed only');
}
if (totalErrors > 0) process.exitCode = 1;
