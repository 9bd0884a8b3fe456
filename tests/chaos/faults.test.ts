// Faults with real processes: the bundled server killed with SIGKILL in the middle of concurrent
// uploads and started again, and two server processes on one database. The invariant: every
// upload that was answered 2xx is stored, each commit exactly once, with all its design rows, and
// a retry (as the CLI makes) of whatever got no answer succeeds. The normal test suite runs a
// short round (PLEAT_CHAOS_UPLOADS, default 40); `npm run chaos` runs 200.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDb, type TestDb } from '../../server/test/db';
import { readFileSync } from 'node:fs';
import { PASSWORD, designEntry, makeCiToken, makeMember, makeProject, makeReport, randomCommit } from '../../server/test/factories';
import type { AppContext } from '../../server/context';
import type { Project } from '../../server/db/models';
import { ensureServerBuilt, startServerProcess, type ServerProcess } from './processes';

const N = Number(process.env.PLEAT_CHAOS_UPLOADS ?? 40);
// A bound on a loaded machine, not a speed assertion: two minutes plus a second per upload.
const TIMEOUT = 120_000 + N * 1000;
let db: TestDb;
let ctx: AppContext;
let project: Project;
let token: string;
const running: ServerProcess[] = [];

beforeAll(async () => {
  await ensureServerBuilt();
  db = await createTestDb();
  ctx = { db } as unknown as AppContext;
  project = await makeProject(ctx);
  token = (await makeCiToken(ctx, project)).secret;
});
afterAll(async () => {
  for (const s of running) s.child.kill('SIGKILL');
  await Promise.all(running.map((s) => s.exited));
  await db?.drop();
});

async function start(port?: number) {
  const s = await startServerProcess(db.schema, port);
  running.push(s);
  return s;
}

const DESIGNS = 3;
function body(commit: string): string {
  return JSON.stringify(makeReport({ branch: 'chaos', commit, designs: Array.from({ length: DESIGNS }, (_, i) => designEntry(`d${i}`)) }));
}

/** One upload; the status, or 0 when the connection failed (no answer). */
async function upload(base: string, commit: string): Promise<number> {
  try {
    const res = await fetch(`${base}/api/projects/${project.slug}/runs`, {
      method: 'POST', headers: { 'Content-Type': 'application/json', Authorization: `Bearer ${token}` }, body: body(commit),
    });
    await res.arrayBuffer();
    return res.status;
  } catch {
    return 0;
  }
}

async function stored(commits: string[]): Promise<Map<string, { runs: number; designs: number }>> {
  const rows = await db.sequelize.query<{ commit: string; runs: string; designs: string }>(
    `SELECT r.commit, count(DISTINCT r.id) AS runs, count(d.id) AS designs FROM runs r LEFT JOIN run_designs d ON d.run_id = r.id
     WHERE r.project_id = $1 AND r.commit = ANY($2) GROUP BY r.commit`,
    { bind: [project.id, commits], type: QueryTypes.SELECT },
  );
  return new Map(rows.map((r) => [r.commit, { runs: Number(r.runs), designs: Number(r.designs) }]));
}

describe('kill -9 during concurrent uploads, then a restart', () => {
  it(`keeps every answered upload exactly once, and the retries of the others succeed (${N} uploads)`, async () => {
    const a = await start();
    const commits = Array.from({ length: N }, () => randomCommit());
    let answered = 0;
    // Sent a few milliseconds apart, as CI jobs arrive: the server writes uploads that arrive
    // together in one statement, so sent all at once they could all be answered before the kill.
    const first = commits.map((c, i) =>
      new Promise((r) => setTimeout(r, i * 15)).then(() => upload(a.url, c)).then((s) => { if (s) answered++; return s; }),
    );
    // Kill once a quarter has been answered: the rest are in flight or not yet sent.
    while (answered < Math.max(1, Math.floor(N / 4))) await new Promise((r) => setTimeout(r, 5));
    a.child.kill('SIGKILL');
    const statuses = await Promise.all(first);
    await a.exited;
    expect(statuses.filter((s) => s === 0).length, 'some uploads must have been cut off').toBeGreaterThan(0);
    expect(statuses.filter((s) => s !== 0 && s !== 201)).toEqual([]);

    const b = await start(a.port);
    // The CLI retries what got no answer; the same commit may have been stored before the kill.
    const retried = await Promise.all(commits.map((c, i) => (statuses[i] === 0 ? upload(b.url, c) : Promise.resolve(statuses[i]!))));
    expect(retried.every((s) => s === 201 || s === 200)).toBe(true);
    const rows = await stored(commits);
    expect(rows.size).toBe(N);
    for (const c of commits) expect(rows.get(c)).toEqual({ runs: 1, designs: DESIGNS });
    expect(b.stderr.join('')).not.toMatch(/\n\s+at /);
  }, TIMEOUT);
});

describe('two server processes on one database', () => {
  it(`store each commit once when both get it at once (${N} commits, each sent to both)`, async () => {
    const [a, b] = await Promise.all([start(), start()]);
    const commits = Array.from({ length: N }, () => randomCommit());
    const pairs = await Promise.all(commits.map((c) => Promise.all([upload(a.url, c), upload(b.url, c)])));
    for (const p of pairs) expect(p.sort()).toEqual([200, 201]);
    const rows = await stored(commits);
    expect(rows.size).toBe(N);
    for (const c of commits) expect(rows.get(c)).toEqual({ runs: 1, designs: DESIGNS });
  }, TIMEOUT);
});

describe('the bundled server', () => {
  it('runs analyses on its bundled worker thread (dist/server/analyze-worker.js)', async () => {
    const s = await start();
    const engineer = await makeMember(ctx, project, 'engineer');
    const login = await fetch(`${s.url}/api/auth/login`, {
      method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: engineer.email, password: PASSWORD }),
    });
    expect(login.status).toBe(200);
    const cookie = login.headers.get('set-cookie')!.split(';')[0]!;
    const form = new FormData();
    form.set('design', new Blob([readFileSync(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url))]), 'sensor-frontend.fold.yaml');
    const res = await fetch(`${s.url}/api/analyze`, { method: 'POST', headers: { Cookie: cookie }, body: form });
    const body = await res.json() as { design: { status: string; name: string } };
    expect(res.status).toBe(200);
    expect(body.design.status).not.toBe('error');
    expect(s.stderr.join('')).not.toMatch(/\n\s+at /);
  }, TIMEOUT);
});
