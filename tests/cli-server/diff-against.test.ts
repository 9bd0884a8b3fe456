// `pleat diff --against <branch>` against the real server: the base is the latest run of the
// branch (GET /api/projects/:slug/branches/:branch/runs, then GET /api/runs/:id), read with a
// member's login; the comparison is the engine's (shared/report/diff.ts). Expected: the smoothing
// design (tests/cli/helpers.ts passingDesign) at N=2 is 50% utilized, at N=4 25% (busy over
// available slots; common practice, no source).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, makeMember } from '../../server/test/factories';
import { cleanupTemps, ensureBuilt, passingDesign, projectWithToken, randomCommit, run, startLiveServer, tempDir, write, type LiveServer } from './helpers';

let s: LiveServer;
beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

describe('pleat diff --against', () => {
  it('compares the designs now with the latest run of the branch on the server', async () => {
    const { project, token } = await projectWithToken(s.ctx);
    const viewer = await makeMember(s.ctx, project, 'viewer');
    const dir = tempDir('pleat-against-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${project.slug}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const up = await run(['check', '--upload'], dir, { PLEAT_TOKEN: token, PLEAT_BRANCH: 'main', PLEAT_COMMIT: randomCommit() });
    expect(up.exitCode, up.stderr).toBe(0);

    write(dir, 'smooth.fold.yaml', passingDesign('smooth').replace('factor: 2', 'factor: 4'));
    const r = await run(['diff', '--against', 'main'], dir, { PLEAT_EMAIL: viewer.email, PLEAT_PASSWORD: PASSWORD });
    expect(r.exitCode, r.stderr).toBe(0);
    expect(r.stdout.split('\n')[0]).toBe('comparing the latest run of main -> the designs as they are now');
    expect(r.stdout).toMatch(/^design smooth {2}folds\n {2}factor {4}N 2 -> 4\n {2}util {6}50% -> 25%$/m);
    expect(r.stdout).toMatch(/^moved: 1 design, 0 as before, 0 new, 0 gone$/m);
  });

  it('says what is missing: a login (a CI token may only upload), a branch without runs', async () => {
    const { project, token } = await projectWithToken(s.ctx);
    const viewer = await makeMember(s.ctx, project, 'viewer');
    const dir = tempDir('pleat-against-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${project.slug}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const noLogin = await run(['diff', '--against', 'main'], dir, { PLEAT_TOKEN: token });
    expect(noLogin.exitCode).toBe(2);
    expect(noLogin.stderr).toMatch(/^pleat: --against reads runs as a member of the project: set PLEAT_EMAIL and PLEAT_PASSWORD/);
    const none = await run(['diff', '--against', 'feature/none'], dir, { PLEAT_EMAIL: viewer.email, PLEAT_PASSWORD: PASSWORD });
    expect(none.exitCode).toBe(2);
    expect(none.stderr).toBe(`pleat: branch feature/none of project ${project.slug} has no runs on the server\n`);
    const wrong = await run(['diff', '--against', 'main'], dir, { PLEAT_EMAIL: viewer.email, PLEAT_PASSWORD: 'not the password' });
    expect(wrong.exitCode).toBe(2);
    expect(wrong.stderr).toMatch(/^pleat: cannot sign in to http:\/\/127\.0\.0\.1:\d+: HTTP 401 /);
  });
});
