// Uploads that fail, the built CLI as a process: the server down (retries, then exit 3 with
// the report on disk), a refused token (exit 3 at once, one clear line), a token of another
// project, setup problems (exit 2 before anything is checked), and which exit code wins.
// The exit codes are those of the project's CLI contract (docs/cli.md).
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  cleanupTemps, closedPortUrl, ensureBuilt, failingDesign, invalidDesign, passingDesign, projectWithToken, randomCommit, run, runsOf, startLiveServer, tempDir, write, type LiveServer,
} from './helpers';

let s: LiveServer;
let slug: string;
let token: string;
let otherToken: string;

beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
  const own = await projectWithToken(s.ctx);
  slug = own.project.slug;
  token = own.token;
  otherToken = (await projectWithToken(s.ctx)).token;
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

function repo(url: string, designs: Record<string, string> = { 'smooth.fold.yaml': passingDesign('smooth') }): string {
  const dir = tempDir('pleat-fail-');
  write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${url}\n  project: ${slug}\n`);
  for (const [f, text] of Object.entries(designs)) write(dir, f, text);
  return dir;
}

const ci = (commit = randomCommit()) => ({ PLEAT_TOKEN: token, PLEAT_BRANCH: 'main', PLEAT_COMMIT: commit });

describe('the server is down', () => {
  it('retries, ends with exit 3, and keeps the report on disk', async () => {
    const dir = repo(await closedPortUrl());
    const commit = randomCommit();
    const r = await run(['check', '--upload'], dir, { ...ci(commit), PLEAT_UPLOAD_TRIES: '3' });
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toMatch(/upload try 1 of 3 failed: cannot reach http:\/\/127\.0\.0\.1:\d+: connection refused \(ECONNREFUSED\); trying again in \d+ ms/);
    expect(r.stderr).toMatch(/upload try 2 of 3 failed/);
    expect(r.stderr).toMatch(/pleat: upload failed \(after 3 tries\): cannot reach/);
    expect(r.stderr).toContain('pleat: the report is kept in .pleat/report.json; send it later with: pleat upload .pleat/report.json');
    expect(r.stdout).toMatch(/^design smooth\S*\s+N=\d+\s+folds$/m); // the check itself still reports
    const kept = JSON.parse(readFileSync(path.join(dir, '.pleat/report.json'), 'utf8'));
    expect(kept).toMatchObject({ format: 'pleat-report/1', verdict: 'pass', git: { branch: 'main', commit } });
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    expect(r.stdout + r.stderr).not.toContain(token);
    expect(readFileSync(path.join(dir, '.pleat/report.json'), 'utf8')).not.toContain(token);
  });

  it('keeps the report where --output put it, and the kept file uploads later', async () => {
    const dir = repo(await closedPortUrl());
    const commit = randomCommit();
    const r = await run(['check', '--format', 'json', '--output', 'ci/pleat.json', '--upload'], dir, { ...ci(commit), PLEAT_UPLOAD_TRIES: '2' });
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toContain('pleat upload ci/pleat.json');
    expect(existsSync(path.join(dir, '.pleat'))).toBe(false);
    // Later, with the server back: the same file goes up.
    const later = await run(['upload', 'ci/pleat.json'], dir, { PLEAT_TOKEN: token, PLEAT_SERVER_URL: s.url });
    expect(later.exitCode).toBe(0);
    expect(await runsOf(s.db, commit)).toHaveLength(1);
  });

  it('exit 3 wins over a broken rule, and an invalid design (2) wins over a failed upload', async () => {
    const down = await closedPortUrl();
    const fail = await run(['check', '--upload'], repo(down, { 'f.fold.yaml': failingDesign('looped') }), { ...ci(), PLEAT_UPLOAD_TRIES: '1' });
    expect(fail.stdout).toMatch(/^design looped\S*\s+N=\d+\s+breaks /m);
    expect(fail.exitCode).toBe(3);
    const invalid = await run(['check', '--upload'], repo(down, { 'i.fold.yaml': invalidDesign('broken') }), { ...ci(), PLEAT_UPLOAD_TRIES: '1' });
    expect(invalid.stderr).toMatch(/upload failed/);
    expect(invalid.exitCode).toBe(2);
  });

  it('pleat upload ends with exit 3 too', async () => {
    const dir = repo(s.url);
    const made = await run(['check', '--format', 'json', '--output', 'r.json'], dir, { PLEAT_BRANCH: 'main', PLEAT_COMMIT: randomCommit() });
    expect(made.exitCode).toBe(0);
    const r = await run(['upload', 'r.json'], dir, { PLEAT_TOKEN: token, PLEAT_SERVER_URL: await closedPortUrl(), PLEAT_UPLOAD_TRIES: '2' });
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toMatch(/upload failed \(after 2 tries\)/);
  });
});

describe('the server refuses', () => {
  it('a wrong token: exit 3 without retrying, one line with the status and the server message', async () => {
    const wrong = 'pleat_ci_wrongwrongwrongwrongwrongwrongwrongwro';
    const dir = repo(s.url);
    const commit = randomCommit();
    const before = s.requests.filter((q) => q.startsWith('POST')).length;
    const r = await run(['check', '--upload'], dir, { ...ci(commit), PLEAT_TOKEN: wrong, PLEAT_UPLOAD_TRIES: '4' });
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toMatch(/^pleat: upload failed \(not retried\): HTTP 401 invalid-credentials: .+$/m);
    expect(r.stderr).not.toMatch(/upload try/);
    expect(s.requests.filter((q) => q.startsWith('POST')).length - before).toBe(1);
    expect(r.stdout + r.stderr).not.toContain(wrong);
    expect(await runsOf(s.db, commit)).toHaveLength(0);
    expect(existsSync(path.join(dir, '.pleat/report.json'))).toBe(true);
  });

  it("another project's token: 403 wrong-project, exit 3", async () => {
    const r = await run(['check', '--upload'], repo(s.url), { ...ci(), PLEAT_TOKEN: otherToken });
    expect(r.exitCode).toBe(3);
    expect(r.stderr).toMatch(/upload failed \(not retried\): HTTP 403 wrong-project: /);
  });
});

describe('set-up problems stop before anything is checked (exit 2)', () => {
  it('--upload without PLEAT_TOKEN', async () => {
    const dir = repo(s.url);
    const r = await run(['check', '--upload'], dir, { PLEAT_BRANCH: 'main', PLEAT_COMMIT: randomCommit() });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toBe("pleat: cannot upload without the project's CI token in the PLEAT_TOKEN environment variable\n");
    expect(r.stdout).toBe('');
    expect(existsSync(path.join(dir, '.pleat'))).toBe(false);
  });

  it('a token written into the config file is refused; the token is read from PLEAT_TOKEN only', async () => {
    const dir = tempDir('pleat-fail-token-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${slug}\n  token: ${token}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const r = await run(['check', '--upload'], dir, { PLEAT_BRANCH: 'main', PLEAT_COMMIT: randomCommit() });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/PLEAT_TOKEN environment variable, never from a file/);
    expect(r.stdout + r.stderr).not.toContain(token);
  });

  it('--upload without a server address or project', async () => {
    const dir = tempDir('pleat-fail-noserver-');
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const r = await run(['check', '--upload', 'smooth.fold.yaml'], dir, ci());
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/cannot upload without the server address \(server\.url in pleat\.config\.yaml, or PLEAT_SERVER_URL\), the project/);
  });

  it('a PLEAT_COMMIT that is not a commit id', async () => {
    const r = await run(['check', '--upload'], repo(s.url), { ...ci(), PLEAT_COMMIT: 'yesterday' });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toBe('pleat: PLEAT_COMMIT must be a commit id of 7 to 64 hex digits\n');
  });

  it('no branch and no commit anywhere (no CI variables, not a git repository)', async () => {
    const r = await run(['check', '--upload'], repo(s.url), { PLEAT_TOKEN: token, GIT_CEILING_DIRECTORIES: path.dirname(tempDir()) });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/cannot upload: no branch \(set PLEAT_BRANCH\) and no commit \(set PLEAT_COMMIT\)/);
  });
});
