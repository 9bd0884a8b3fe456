// The commit's message (first line) and author go with an upload: from the CI's variables where
// the CI gives them, else from `git log -1` of the checked commit (real git in a throw-away
// repository; the stored run on the real server is the reference).
import { execa } from 'execa';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, passingDesign, projectWithToken, randomCommit, run, runsOf, startLiveServer, tempDir, write, type LiveServer } from './helpers';

let s: LiveServer;
beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

type Stored = { report: { git: { message?: string; author?: string } } };

describe('message and author of the commit', () => {
  it('come from git when no CI says them', async () => {
    const { project, token } = await projectWithToken(s.ctx);
    const dir = tempDir('pleat-facts-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${project.slug}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const env = { GIT_AUTHOR_NAME: 'Ada Field', GIT_AUTHOR_EMAIL: 'a@example.test', GIT_COMMITTER_NAME: 'Ada Field', GIT_COMMITTER_EMAIL: 'a@example.test' };
    await execa('git', ['init', '-q', '-b', 'main'], { cwd: dir });
    await execa('git', ['add', '.'], { cwd: dir });
    await execa('git', ['-c', 'commit.gpgsign=false', 'commit', '-q', '-m', 'Fold the smoother at N=2', '-m', 'Body text that stays out.'], { cwd: dir, env });
    const commit = (await execa('git', ['rev-parse', 'HEAD'], { cwd: dir })).stdout.trim();
    const r = await run(['check', '--upload'], dir, { PLEAT_TOKEN: token });
    expect(r.exitCode, r.stderr).toBe(0);
    const [stored] = (await runsOf(s.db, commit)) as unknown as Stored[];
    expect(stored.report.git).toMatchObject({ message: 'Fold the smoother at N=2', author: 'Ada Field' });
  });

  it('come from the CI variables when the CI says them (GitLab: CI_COMMIT_TITLE, CI_COMMIT_AUTHOR)', async () => {
    const { project, token } = await projectWithToken(s.ctx);
    const dir = tempDir('pleat-facts-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${project.slug}\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const commit = randomCommit();
    const r = await run(['check', '--upload'], dir, {
      PLEAT_TOKEN: token, GITLAB_CI: 'true', CI_COMMIT_BRANCH: 'main', CI_COMMIT_SHA: commit,
      CI_COMMIT_TITLE: 'Retime the tap bank', CI_COMMIT_AUTHOR: 'Bo Reed <b@example.test>',
    });
    expect(r.exitCode, r.stderr).toBe(0);
    const [stored] = (await runsOf(s.db, commit)) as unknown as Stored[];
    expect(stored.report.git).toMatchObject({ message: 'Retime the tap bank', author: 'Bo Reed' });
  });
});
