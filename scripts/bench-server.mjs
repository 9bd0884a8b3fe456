#!/usr/bin/env node
// Server benchmark on loopback with autocannon, each number beside a baseline measured in the same
// run against the same server process:
//  - ingestion: CI uploads per second (POST /api/projects/:slug/runs, a real CLI report of the
//    example designs, a new commit each time) against requests per second of the bare liveness
//    route (GET /api/health/live: no database, no session);
//  - reading history at scale: p95 latency of a branch's history page with N stored runs
//    (default 100,000, bulk-inserted with generate_series), first page and a deep cursor page, of
//    the branch list and of one run with its comparison, each against the bare route's p95 at the
//    same concurrency.
//  - analysis beside reads: the history page's p95 while POST /api/analyze works through a
//    100,000-edge design (one after another for the whole measurement), against the same page
//    measured just before without it: the worker threads must keep the request thread free.
// Options: --runs N (stored runs, default 100000), --duration S (seconds per measurement,
// default 5), --connections C (default 10), --json FILE, --no-docs (do not write docs/performance.md),
// --keep-db (keep the database pleat_bench afterwards), --analyze-edges N (the design's size, default
// 100000; 0 leaves the measurement out), --cpu-prof DIR (the server runs under node --cpu-prof and
// writes its profile there when it stops), --only LIST (measure only these rows, comma-separated:
// health, upload, history, short, deep, filtered, analysis, branches, run; the docs are then not
// written), --before DIR (a second checkout, e.g. the code before a change: its server is built,
// started beside this one on the same database, and every row is measured on both, alternately,
// the order swapped from row to row; the docs are then not written).
// Besides the server's own CPU per request, the CPU of the PostgreSQL backends that served it
// (found by application_name in pg_stat_activity) is given per request: on a small machine the
// two share the cores.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync, existsSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import pg from 'pg';
import bcrypt from 'bcryptjs';
import { generateDesign } from './gen-design.mjs';
import { buildAndMigrate, dropDatabase, freshDatabase, load, loginCookie, postgres, seedProject, serverEnv, startServer } from './server-load.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
// node's own argument parser: an unknown or misspelt option is an error, not silently ignored.
const { values: args } = parseArgs({
  options: {
    runs: { type: 'string', default: '100000' },
    duration: { type: 'string', default: '5' },
    connections: { type: 'string', default: '10' },
    json: { type: 'string' },
    'no-docs': { type: 'boolean', default: false },
    'keep-db': { type: 'boolean', default: false },
    'analyze-edges': { type: 'string', default: '100000' },
    'cpu-prof': { type: 'string' },
    only: { type: 'string' },
    before: { type: 'string' },
  },
});
const STORED = Number(args.runs);
const DURATION = Number(args.duration);
const CONNECTIONS = Number(args.connections);
const JSON_OUT = args.json ?? null;
const ANALYZE_EDGES = Number(args['analyze-edges']);
const ROWS = ['health', 'upload', 'history', 'short', 'deep', 'filtered', 'analysis', 'branches', 'run'];
const ONLY = args.only ? new Set(args.only.split(',').map((x) => x.trim()).filter(Boolean)) : null;
for (const k of ONLY ?? []) if (!ROWS.includes(k)) throw new Error(`--only: no row '${k}' (${ROWS.join(', ')})`);
const wanted = (k) => !ONLY || ONLY.has(k);
const BEFORE = args.before ? path.resolve(args.before) : null;
const WRITE_DOCS = !args['no-docs'] && !ONLY && !BEFORE;
const say = (m) => process.stderr.write(`bench-server: ${m}\n`);
const loadAtStart = loadavg()[0];

// ---------------------------------------------------------------- set-up
const pgUrl = await postgres(root);
const DB = 'pleat_bench';
const dbUrl = await freshDatabase(pgUrl, DB);
const env = serverEnv(root, dbUrl, 'bench-only-secret'); // upload limits out of the way: ingestion is measured, not the limits
buildAndMigrate(root, env);

// A real report: what `pleat check` writes for four example designs.
const cli = existsSync(path.join(root, 'dist/cli/pleat.cjs')) ? [path.join(root, 'bin/pleat.js')] : [path.join(root, 'node_modules/.bin/tsx'), path.join(root, 'cli/main.ts')];
const exampleFiles = ['sensor-frontend', 'butterfly-stage', 'channelizer-taps', 'equaliser-retimed'].map((n) => `examples/${n}.fold.yaml`);
let reportText;
try {
  reportText = execFileSync(cli[0].endsWith('tsx') ? cli[0] : process.execPath, [...(cli[0].endsWith('tsx') ? cli.slice(1) : cli), 'check', ...exampleFiles, '--format', 'json'], { cwd: root, encoding: 'utf8' });
} catch (e) {
  reportText = e.stdout; // exit 1 (a rule broken) still prints the report
}
const report = JSON.parse(reportText);

const client = new pg.Client({ connectionString: dbUrl });
await client.connect();
const password = 'bench password';
const ciToken = 'pleat_ci_bench_' + 'x'.repeat(40);
const { projectId, email } = await seedProject(client, { slug: 'bench', name: 'Bench', password, token: ciToken });
const project = { id: projectId };
// An engineer for POST /api/analyze (the viewer may not try designs).
const engineerEmail = 'engineer@bench.test';
const { rows: [engineer] } = await client.query(
  `INSERT INTO users (email, name, password_hash) VALUES ($1, 'Engineer', $2) RETURNING id`, [engineerEmail, bcrypt.hashSync(password, 4)]);
await client.query(`INSERT INTO memberships (project_id, user_id, role) VALUES ($1, $2, 'engineer')`, [projectId, engineer.id]);

// N stored runs on one branch, one a minute back in time, two designs each; a small report body
// (history pages never read it).
say(`inserting ${STORED.toLocaleString('en')} runs`);
let t0 = performance.now();
const small = JSON.stringify({ format: 'pleat-report/1', tool: { name: 'pleat', version: 'bench' }, git: { branch: 'main', commit: '0' }, verdict: 'pass', designs: [] });
await client.query(
  `INSERT INTO runs (project_id, branch, commit, verdict, tool_version, design_count, failed_count, error_count, utilization,
                     register_minimum, violation_count, report, created_at)
   SELECT $1, 'main', lpad(to_hex(g), 40, '0'), CASE WHEN g % 17 = 0 THEN 'fail' ELSE 'pass' END, 'bench', 2, (g % 17 = 0)::int, 0,
          0.5 + (g % 40) / 100.0, 10 + g % 7, (g % 17 = 0)::int, $2::jsonb, now() - (($3 - g) * interval '1 minute')
   FROM generate_series(1, $3) AS g`,
  [project.id, small, STORED],
);
// A short branch of 1,000 runs: the same page read there shows whether history length matters.
await client.query(
  `INSERT INTO runs (project_id, branch, commit, verdict, tool_version, design_count, failed_count, error_count, utilization,
                     register_minimum, violation_count, report, created_at)
   SELECT $1, 'short', lpad(to_hex(g), 40, '0'), 'pass', 'bench', 2, 0, 0, 0.7, 12, 0, $2::jsonb, now() - ((1000 - g) * interval '1 minute')
   FROM generate_series(1, 1000) AS g`,
  [project.id, small],
);
await client.query(
  `INSERT INTO run_designs (run_id, design_name, file, status, utilization, register_minimum, negative_edge_count, retiming_feasible, violation_count)
   SELECT r.id, d.name, d.name || '.fold.yaml', r.verdict, r.utilization, r.register_minimum / 2, 0, true, r.violation_count
   FROM runs r CROSS JOIN (VALUES ('notch'), ('fir')) AS d(name) WHERE r.project_id = $1`,
  [project.id],
);
await client.query(
  `INSERT INTO branches (project_id, name, last_run_id, last_run_at)
   SELECT DISTINCT ON (branch) project_id, branch, id, created_at FROM runs WHERE project_id = $1
   ORDER BY branch, created_at DESC, id DESC`, [project.id]);
// VACUUM as autovacuum would after a bulk load: it sets the visibility map that index-only scans need.
await client.query('VACUUM (ANALYZE)');
const insertSeconds = (performance.now() - t0) / 1000;
const { rows: [mid] } = await client.query(
  `SELECT id, created_at FROM runs WHERE project_id = $1 AND branch = 'main' ORDER BY created_at DESC, id DESC OFFSET $2 LIMIT 1`,
  [project.id, Math.floor(STORED / 2)]);
const deepCursor = `${mid.created_at.toISOString()},${mid.id}`;
say(`inserted in ${insertSeconds.toFixed(1)} s`);

// ---------------------------------------------------------------- the server
const nodeArgs = args['cpu-prof'] ? ['--cpu-prof', '--cpu-prof-dir', path.resolve(args['cpu-prof'])] : [];
// Each server names its PostgreSQL connections (PGAPPNAME), so their backends' CPU can be told apart.
const servers = [];
async function addServer(label, dir) {
  const s = await startServer(dir, { ...env, PLEAT_ROOT: dir, PGAPPNAME: `pleat-bench-${label}` }, { nodeArgs });
  servers.push({ label, ...s, cookie: await loginCookie(s.base, email, password), engineerCookie: await loginCookie(s.base, engineerEmail, password) });
}
if (BEFORE) {
  say(`building the server of ${BEFORE}`);
  execFileSync(process.execPath, ['scripts/build.mjs', '--server-only'], { cwd: BEFORE, stdio: 'inherit' });
  await addServer('before', BEFORE);
}
await addServer(BEFORE ? 'after' : 'this', root);
const { cookie, engineerCookie } = servers[servers.length - 1];

// A figure that a loaded machine disturbs far less than latency: the server process's CPU time
// per answered request (utime + stime of /proc/<pid>/stat, in clock ticks of 10 ms). Requests
// still in flight when a measurement ends are counted but not answered, so at a few requests a
// second it reads high.
const cpuMsOf = (pid) => {
  try {
    const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(f[11]) + Number(f[12])) * 10;
  } catch {
    return 0; // a backend that has gone
  }
};
/** CPU time so far of the PostgreSQL backends of one server (by the application_name it connects with). */
async function pgCpu(label) {
  const { rows } = await client.query('SELECT pid FROM pg_stat_activity WHERE application_name = $1', [`pleat-bench-${label}`]);
  return new Map(rows.map((r) => [r.pid, cpuMsOf(r.pid)]));
}
const pgCpuSince = (before, after) => [...after].reduce((a, [pid, ms]) => a + ms - (before.get(pid) ?? 0), 0);

/** One autocannon measurement at the benchmark's connection count, against `srv` (default: this checkout's). */
async function measure(name, { duration = DURATION, srv = servers[servers.length - 1], ...request }) {
  const c0 = cpuMsOf(srv.server.pid);
  const p0 = await pgCpu(srv.label);
  const out = { name, server: srv.label, ...(await load(srv.base, { connections: CONNECTIONS, duration, request: srv.adapt ? srv.adapt(request) : request })) };
  out.cpuMsPerRequest = (cpuMsOf(srv.server.pid) - c0) / out.requests;
  out.pgCpuMsPerRequest = pgCpuSince(p0, await pgCpu(srv.label)) / out.requests;
  out.loadAverage = loadavg()[0];
  if (out.errors) throw new Error(`${name}: unexpected statuses ${JSON.stringify(out.statuses)}`);
  say(`${servers.length > 1 ? `[${srv.label}] ` : ''}${name}: ${out.perSecond.toFixed(0)}/s, p95 ${out.p95.toFixed(2)} ms, CPU per request ${out.cpuMsPerRequest.toFixed(2)} ms server + ${out.pgCpuMsPerRequest.toFixed(2)} ms PostgreSQL (${JSON.stringify(out.statuses)}, load ${out.loadAverage.toFixed(2)})`);
  return out;
}

// A request's session cookie is the one of the server it is sent to (both servers share the
// secret, but each signs its own).
for (const srv of servers) {
  srv.adapt = (r) => (r.headers?.cookie ? { ...r, headers: { ...r.headers, cookie: srv.cookie } } : r);
  const warm = { duration: 1, srv };
  await measure('warm-up', { ...warm, path: '/api/health/live' });
  await measure('warm-up', { ...warm, path: '/api/projects/bench/branches/main/runs?limit=50', headers: { cookie } });
}

// Each measurement is paired with the bare route measured just before it, so that a change in
// the machine's load (other processes) hits both numbers of a ratio alike. With --before, each
// row is measured on both servers, the order swapped from one row to the next.
const BARE = { path: '/api/health/live' };
const pairs = [];
let turn = 0;
async function paired(key, name, o) {
  if (!wanted(key)) return null;
  const order = turn++ % 2 === 0 ? servers : [...servers].reverse();
  let mine = null;
  for (const srv of order) {
    const b = await measure('  bare GET /api/health/live', { ...BARE, srv });
    const t = await measure(name, { ...o, srv });
    pairs.push({ key, name, server: srv.label, bare: b, target: t });
    if (srv === servers[servers.length - 1]) mine = { key, name, server: srv.label, bare: b, target: t };
  }
  return mine;
}

const bareDb = await paired('health', 'GET /api/health (one SELECT 1)', { path: '/api/health' });
let n = 0;
const body = JSON.stringify({ ...report, git: { branch: 'ingest', commit: 'c'.repeat(40) } });
const [bodyHead, bodyTail] = body.split('c'.repeat(40));
const ingest = await paired('upload', 'ingestion POST /api/projects/bench/runs', {
  path: '/api/projects/bench/runs',
  method: 'POST',
  headers: { 'content-type': 'application/json', authorization: `Bearer ${ciToken}` },
  body,
  // The commit spliced into the text: parsing and serialising 29 KiB per request here would take
  // the server's CPU on a small machine and be measured as the server's cost.
  setupRequest: (req) => {
    n++;
    return { ...req, body: `${bodyHead}${n.toString(16).padStart(40, 'a')}${bodyTail}` };
  },
});
const hdr = { cookie };
const history = await paired('history', `history page (limit 50) at ${STORED.toLocaleString('en')} runs`, {
  path: '/api/projects/bench/branches/main/runs?limit=50', headers: hdr,
});
const short = await paired('short', 'history page (limit 50) of a branch with 1,000 runs', {
  path: '/api/projects/bench/branches/short/runs?limit=50', headers: hdr,
});
const deep = await paired('deep', 'history page at a deep cursor (middle of the branch)', {
  path: `/api/projects/bench/branches/main/runs?limit=50&cursor=${encodeURIComponent(deepCursor)}`, headers: hdr,
});
const filtered = await paired('filtered', 'history page filtered by design', {
  path: '/api/projects/bench/branches/main/runs?limit=50&design=fir', headers: hdr,
});
// The history page while the analysis threads work through a large design, one request after
// another for the whole measurement, against the same page measured just before without it.
let analysis = null;
if (ANALYZE_EDGES > 0 && wanted('analysis')) {
  const text = generateDesign({ edges: ANALYZE_EDGES, seed: 7 }).text;
  const form = () => {
    const f = new FormData();
    f.set('design', new Blob([text], { type: 'application/yaml' }), 'big.fold.yaml');
    return f;
  };
  const page = { path: '/api/projects/bench/branches/main/runs?limit=50', headers: hdr };
  const quiet = await measure('history page, no analysis running', page);
  let running = true;
  const answers = [];
  const loop = (async () => {
    while (running) {
      const t1 = performance.now();
      const r = await fetch(`${servers[servers.length - 1].base}/api/analyze`, { method: 'POST', headers: { cookie: engineerCookie }, body: form() });
      await r.arrayBuffer();
      answers.push({ status: r.status, ms: performance.now() - t1 });
    }
  })();
  // The first analysis has begun before the reads are measured.
  await new Promise((r) => setTimeout(r, 500));
  const busy = await measure(`history page while ${ANALYZE_EDGES.toLocaleString('en')}-edge designs are analysed`, page);
  running = false;
  await loop;
  if (answers.some((a) => a.status !== 200)) throw new Error(`analysis: statuses ${answers.map((a) => a.status).join(', ')}`);
  analysis = { quiet, busy, analyses: answers };
  say(`analyses: ${answers.length}, each ${answers.map((a) => (a.ms / 1000).toFixed(1)).join(', ')} s`);
}
const branches = await paired('branches', 'branch list with trends', { path: '/api/projects/bench/branches', headers: hdr });
const oneRun = await paired('run', 'one run with its comparison', { path: `/api/runs/${mid.id}`, headers: hdr });

const { rows: [{ count: ingested }] } = await client.query(`SELECT count(*) FROM runs WHERE branch = 'ingest'`);
await client.end();
for (const srv of servers) await srv.stop();
// The bench database is large and only for this run; --keep-db leaves it for a look.
if (!args['keep-db']) await dropDatabase(pgUrl, DB);

// ---------------------------------------------------------------- results
const results = {
  machine: { cpus: cpus().length, cpu: cpus()[0]?.model ?? '?', node: process.version },
  stored: STORED, insertSeconds, durationSeconds: DURATION, connections: CONNECTIONS, reportBytes: body.length,
  ingestedRuns: Number(ingested), pairs, analysis,
};
const fmt = (x, d = 1) => x.toLocaleString('en', { maximumFractionDigits: d, minimumFractionDigits: d });
const LABELS = {
  health: ['`GET /api/health` (one `SELECT 1`)', 'req/s', false],
  upload: [`CI upload (${fmt(body.length / 1024, 0)} KiB report of the CLI, new commit each)`, 'runs/s', true],
  history: [`branch history, first page of 50, ${STORED.toLocaleString('en')} runs stored`, 'req/s', false],
  short: ['the same page on a branch of 1,000 runs', 'req/s', false],
  deep: ['branch history, page at a cursor half-way down the 100,000', 'req/s', false],
  filtered: ['branch history filtered by design', 'req/s', false],
  branches: ['branch list with 12-run trends', 'req/s', false],
  run: ['one run with its comparison against the base branch', 'req/s', false],
};
const line = (p) => {
  const [label, unit, rate] = LABELS[p.key];
  return [
    ...(BEFORE ? [p.server] : []),
    label,
    `${fmt(p.target.perSecond, 0)} ${unit}`,
    `${fmt(p.target.p95, 2)} ms`,
    `${fmt(p.target.cpuMsPerRequest, 2)} ms + ${fmt(p.target.pgCpuMsPerRequest, 2)} ms`,
    `${fmt(p.bare.perSecond, 0)} req/s, p95 ${fmt(p.bare.p95, 2)} ms, ${fmt(p.bare.cpuMsPerRequest, 2)} ms`,
    rate ? `${fmt(p.target.perSecond / p.bare.perSecond, 3)} of bare req/s` : `${fmt(p.target.p95 / p.bare.p95, 1)}x bare p95`,
    fmt(p.target.loadAverage, 1),
  ];
};
// In the order measured; with --before, each row's two servers one after the other.
const rowsMd = pairs.map(line);
if (analysis) {
  rowsMd.push([
    `branch history while ${ANALYZE_EDGES.toLocaleString('en')}-edge designs are analysed (${analysis.analyses.length} analyses)`,
    `${fmt(analysis.busy.perSecond, 0)} req/s`,
    `${fmt(analysis.busy.p95, 2)} ms`,
    `${fmt(analysis.busy.cpuMsPerRequest, 2)} ms + ${fmt(analysis.busy.pgCpuMsPerRequest, 2)} ms`,
    `without analysis just before: ${fmt(analysis.quiet.perSecond, 0)} req/s, p95 ${fmt(analysis.quiet.p95, 2)} ms`,
    `${fmt(analysis.busy.p95 / analysis.quiet.p95, 1)}x the p95 without`,
    fmt(analysis.busy.loadAverage, 1),
  ]);
}
const head = [...(BEFORE ? ['code'] : []), 'measurement', 'throughput', 'p95 latency', 'CPU per request (server + PostgreSQL)', 'bare route just before (server CPU)', 'ratio', 'load'];
const table = [`| ${head.join(' | ')} |`, `|${head.map(() => ' --- |').join('')}`, ...rowsMd.map((r) => `| ${r.join(' | ')} |`)].join('\n');
process.stdout.write(`\n${table}\n\n`);
if (JSON_OUT) writeFileSync(JSON_OUT, JSON.stringify(results, null, 2));

if (WRITE_DOCS) {
  const file = path.join(root, 'docs/performance.md');
  const section = [
    '## Server',
    '',
    `Measured by \`node scripts/bench-server.mjs\` on ${new Date().toISOString().slice(0, 10)}: ${results.machine.cpus} cores (${results.machine.cpu}), Node ${results.machine.node},`,
    `load average ${fmt(loadAtStart, 1)} at the start (other work shared the machine), PostgreSQL 15 from \`scripts/pg.sh\` (fsync off),`,
    `one server process, autocannon in the benchmark's process on loopback with ${CONNECTIONS} connections,`,
    `${DURATION} s per measurement. Every measurement is paired with the bare liveness route (\`GET /api/health/live\`: no`,
    'database, no session) of the same server process measured just before it, so the ratios hold across machines and',
    'load better than the raw numbers.',
    `The history was bulk-inserted (${STORED.toLocaleString('en')} runs on one branch, two designs each) in ${fmt(insertSeconds, 1)} s.`,
    '',
    table,
    '',
    `History length: the first page at ${STORED.toLocaleString('en')} runs against the same page of a 1,000-run branch,`,
    `measured one after the other: ${fmt(history.target.p95 / short.target.p95, 2)}x the p95 and ${fmt(history.target.perSecond / short.target.perSecond, 2)}x the throughput.`,
    '',
    'Reading: an upload finds the token, the project and the role and counts its rate limits in one statement, validates',
    'the report against its schema and writes the run, its per-design rows and the branch pointer in another. A history',
    'page is one statement (prepared once per connection): the session check, the project and role, and index-only scans',
    'of the covering indexes of migration 008 (`runs (project_id, branch, created_at DESC, id DESC) INCLUDE (...)` and',
    '`run_designs (run_id, id) INCLUDE (...)`), the page\'s whole JSON written by PostgreSQL and sent as it comes (no',
    'object per run in the server), so its cost does not grow with the length of the history (compare the',
    'branch of 1,000 runs and the page half-way down 100,000: cursor paging, no OFFSET). On this machine each request',
    'costs mostly system calls (socket writes to the client and to PostgreSQL) and JSON; the bare route shows what the',
    'HTTP layer alone costs under the same load.',
    '',
  ].join('\n');
  let text = existsSync(file) ? readFileSync(file, 'utf8') : '# Performance\n\n';
  const start = text.indexOf('## Server\n');
  if (start >= 0) {
    const next = text.indexOf('\n## ', start + 1);
    text = text.slice(0, start) + section + (next >= 0 ? text.slice(next + 1) : '');
  } else {
    text = `${text.replace(/\n*$/, '\n\n')}${section}`;
  }
  writeFileSync(file, text);
  say('wrote the Server section of docs/performance.md');
}
