// `pleat check --upload` and `pleat upload REPORT.json`, the built CLI as a process against the
// real server and PostgreSQL: a run is created (201), the same commit never makes a second run
// (again, or twice at once), the git facts arrive, and a server error is retried.
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  cleanupTemps, ensureBuilt, passingDesign, projectWithToken, randomCommit, run, runsOf, startLiveServer, tempDir, write, type LiveServer,
} from './helpers';

let s: LiveServer;
let slug: string;
let token: string;
let repo: string;

beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
  const p = await projectWithToken(s.ctx);
  slug = p.project.slug;
  token = p.token;
  repo = tempDir('pleat-upload-');
  write(repo, 'pleat.config.yaml', `designs: ["hw/*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${slug}\n`);
  write(repo, 'hw/smooth.fold.yaml', passingDesign('smooth'));
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

const env = (commit: string, extra: Record<string, string> = {}) => ({ PLEAT_TOKEN: token, PLEAT_BRANCH: 'main', PLEAT_COMMIT: commit, ...extra });

describe('check --upload', () => {
  it('creates a run, then a second upload of the same commit adds none', async () => {
    const commit = randomCommit();
    const first = await run(['check', '--upload'], repo, env(commit));
    expect(first.stderr).toMatch(/pleat: uploaded: run \d+ of proj-/);
    expect(first.exitCode).toBe(0);
    const rows = await runsOf(s.db, commit);
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ branch: 'main', verdict: 'pass' });
    // The design's text rides along, so the run page can plan it (docs/server.md, Jobs).
    const [stored] = await s.db.sequelize.query<{ source: string }>(
      `SELECT report->'designs'->0->>'source' AS source FROM runs WHERE commit = $1`, { bind: [commit], type: QueryTypes.SELECT },
    );
    expect(stored!.source).toBe(readFileSync(path.join(repo, 'hw/smooth.fold.yaml'), 'utf8'));

    // CI runs the job again on the same commit.
    const again = await run(['check', '--upload'], repo, env(commit));
    expect(again.exitCode).toBe(0);
    expect(again.stderr).toMatch(/already stored as run \d+/);
    expect(await runsOf(s.db, commit)).toHaveLength(1);

    // The report stays on disk, with the facts that were sent (and without the design texts).
    const kept = JSON.parse(readFileSync(path.join(repo, '.pleat/report.json'), 'utf8'));
    expect(kept.git).toEqual({ branch: 'main', commit });
    expect(kept.designs[0].source).toBeUndefined();
    expect(existsSync(path.join(repo, '.pleat/.gitignore'))).toBe(true);
    for (const r of [first, again]) expect(r.stdout + r.stderr).not.toContain(token);
  });

  it('makes one run when two jobs upload the same commit at once', async () => {
    const commit = randomCommit();
    const both = await Promise.all([run(['check', '--upload', '-q'], repo, env(commit)), run(['check', '--upload', '-q'], repo, env(commit))]);
    expect(both.map((r) => r.exitCode)).toEqual([0, 0]);
    expect(await runsOf(s.db, commit)).toHaveLength(1);
  });

  it('sends the base branch and merge-base that git computes from a real repository', async () => {
    const gitEnv = { ...process.env, GIT_AUTHOR_NAME: 't', GIT_AUTHOR_EMAIL: 't@example.test', GIT_COMMITTER_NAME: 't', GIT_COMMITTER_EMAIL: 't@example.test', GIT_CONFIG_NOSYSTEM: '1', HOME: tmpdir() };
    const dir = tempDir('pleat-upload-git-');
    const git = (...a: string[]) => execFileSync('git', a, { cwd: dir, env: gitEnv, encoding: 'utf8' }).trim();
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${slug}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    git('init', '-q', '-b', 'main');
    git('add', '.');
    git('commit', '-q', '-m', 'base');
    const forkPoint = git('rev-parse', 'HEAD');
    git('checkout', '-q', '-b', `feature/fir-${forkPoint.slice(0, 6)}`);
    writeFileSync(path.join(dir, 'notes.txt'), 'x\n');
    git('add', 'notes.txt');
    git('commit', '-q', '-m', 'feature');
    const head = git('rev-parse', 'HEAD');
    git('checkout', '-q', 'main');
    writeFileSync(path.join(dir, 'more.txt'), 'y\n');
    git('add', 'more.txt');
    git('commit', '-q', '-m', 'main moves on');
    git('checkout', '-q', `feature/fir-${forkPoint.slice(0, 6)}`);

    const r = await run(['check', '--upload'], dir, { PLEAT_TOKEN: token, PLEAT_BASE_BRANCH: 'main' });
    expect(r.stderr).toMatch(/uploaded/);
    expect(r.exitCode).toBe(0);
    const rows = await runsOf(s.db, head);
    // git merge-base is the reference: the fork point, not main's newer tip.
    expect(rows).toEqual([expect.objectContaining({ branch: `feature/fir-${forkPoint.slice(0, 6)}`, base_branch: 'main', base_commit: forkPoint })]);
  });

  it('retries a server error and then stores the run', async () => {
    const commit = randomCommit();
    s.failNextUploads(2);
    const r = await run(['check', '--upload'], repo, env(commit, { PLEAT_UPLOAD_TRIES: '4' }));
    expect(r.stderr).toMatch(/upload try 1 of 4 failed: HTTP 503 unavailable: The server is restarting\./);
    expect(r.stderr).toMatch(/upload try 2 of 4 failed/);
    expect(r.stderr).not.toMatch(/upload try 3/);
    expect(r.exitCode).toBe(0);
    expect(await runsOf(s.db, commit)).toHaveLength(1);
  });
});

describe('pleat upload REPORT.json', () => {
  it('uploads a report that check wrote; twice at once still makes one run', async () => {
    const commit = randomCommit();
    const out = path.join(repo, 'reports/pleat.json');
    const checked = await run(['check', '--format', 'json', '--output', out], repo, { PLEAT_BRANCH: 'release/1', PLEAT_COMMIT: commit });
    expect(checked.exitCode).toBe(0);
    const before = readFileSync(out, 'utf8');
    const uploads = await Promise.all([run(['upload', out], repo, { PLEAT_TOKEN: token }), run(['upload', out], repo, { PLEAT_TOKEN: token })]);
    expect(uploads.map((u) => u.exitCode)).toEqual([0, 0]);
    const said = uploads.map((u) => u.stderr).join('\n');
    expect(said).toMatch(/pleat: uploaded: run \d+ of proj-[^,]+, branch release\/1/);
    expect(said).toMatch(/already stored/);
    const rows = await runsOf(s.db, commit);
    expect(rows).toHaveLength(1);
    expect(rows[0]!.branch).toBe('release/1');
    expect(readFileSync(out, 'utf8')).toBe(before); // the file is sent, not changed
    // The design's text goes with it as with check --upload, read from where check found it.
    const [stored] = await s.db.sequelize.query<{ source: string }>(
      `SELECT report->'designs'->0->>'source' AS source FROM runs WHERE commit = $1`, { bind: [commit], type: QueryTypes.SELECT },
    );
    expect(stored!.source).toBe(readFileSync(path.join(repo, 'hw/smooth.fold.yaml'), 'utf8'));
  });

  it('fills a missing branch and commit from the environment', async () => {
    const commit = randomCommit();
    const out = path.join(repo, 'reports/nogit.json');
    const report = JSON.parse((await run(['check', '--format', 'json'], repo, { PLEAT_BRANCH: 'x', PLEAT_COMMIT: randomCommit() })).stdout);
    report.git = { branch: null, commit: null };
    writeFileSync(out, JSON.stringify(report));
    const r = await run(['upload', out], repo, { PLEAT_TOKEN: token, CIRCLECI: 'true', CIRCLE_BRANCH: 'feature/ci', CIRCLE_SHA1: commit });
    expect(r.exitCode).toBe(0);
    expect((await runsOf(s.db, commit))[0]).toMatchObject({ branch: 'feature/ci' });
  });

  it('refuses a file that is not a pleat report (exit 2, nothing sent)', async () => {
    const bad = write(repo, 'reports/other.json', '{"format":"something-else"}');
    const before = s.requests.length;
    const r = await run(['upload', bad], repo, { PLEAT_TOKEN: token });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/is not a pleat report/);
    expect(s.requests.length).toBe(before);
  });

  it('checks the report against the server\'s schema (shared/report/reportSchema.ts) and sends nothing the server would refuse', async () => {
    const commit = randomCommit();
    const report = JSON.parse((await run(['check', '--format', 'json'], repo, { PLEAT_BRANCH: 'main', PLEAT_COMMIT: commit })).stdout);
    report.designs[0].edges = [null];
    const bad = write(repo, 'reports/null-edge.json', JSON.stringify(report));
    const before = s.requests.length;
    const r = await run(['upload', bad], repo, { PLEAT_TOKEN: token });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/the report is not one the server takes: \/designs\/0\/edges\/0 must be object/);
    expect(s.requests.length).toBe(before);
    expect(await runsOf(s.db, commit)).toHaveLength(0);
  });
});
