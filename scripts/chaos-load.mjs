#!/usr/bin/env node
// Load on loopback for a bounded time (part of `npm run chaos`, not of `npm test`): one bundled
// server process, CI uploads and history reads at once at 10 and then 50 connections, then the
// bare liveness route (GET /api/health/live: no database, no session) at the same connection
// count right after, as the baseline of the same server in the same run. Counts every error
// (socket errors, timeouts, any status but 2xx) and writes the figures into docs/reliability.md.
// Options: --duration S (seconds per phase, default 10), --no-docs.
import { randomBytes } from 'node:crypto';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import pg from 'pg';
import { buildAndMigrate, dropDatabase, freshDatabase, load, loginCookie, postgres, seedProject, serverEnv, startServer } from './server-load.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const { values: args } = parseArgs({ options: { duration: { type: 'string', default: '10' }, 'no-docs': { type: 'boolean', default: false } } });
const DURATION = Number(args.duration);
const WRITE_DOCS = !args['no-docs'];
const say = (m) => process.stderr.write(`chaos-load: ${m}\n`);
const loadAtStart = loadavg()[0];

const pgUrl = await postgres(root);
const DB = 'pleat_chaos';
const dbUrl = await freshDatabase(pgUrl, DB);
const env = serverEnv(root, dbUrl, 'chaos-only-secret', { perMinute: '100000000', perDay: '100000000' });
buildAndMigrate(root, env);

const client = new pg.Client({ connectionString: dbUrl });
await client.connect();
const password = 'chaos password';
const token = `pleat_ci_${randomBytes(32).toString('base64url')}`;
const { email } = await seedProject(client, { slug: 'chaos', name: 'Chaos', password, token });
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

const { base, stop, log } = await startServer(root, env);
const cookie = await loginCookie(base, email, password);
// Some history to read before the first phase.
for (let i = 0; i < 60; i++) {
  await fetch(`${base}/api/projects/chaos/runs`, { method: 'POST', headers: { 'content-type': 'application/json', authorization: `Bearer ${token}` }, body: reportFor(randomBytes(20).toString('hex')) });
}

async function run(name, connections, request) {
  return { name, ...(await load(base, { connections, duration: DURATION, request })) };
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
await stop();
await dropDatabase(pgUrl, DB);
const stackTraces = (log().match(/\n\s+at /g) ?? []).length;

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
