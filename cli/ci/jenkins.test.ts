// Variable names and their meaning: Jenkins Pipeline documentation (multibranch: BRANCH_NAME,
// CHANGE_ID, CHANGE_BRANCH, CHANGE_TARGET) and the Git plugin's environment variables
// (GIT_COMMIT, GIT_BRANCH as "origin/<name>", GIT_LOCAL_BRANCH). Recalled from memory.
import { describe, expect, it } from 'vitest';
import { jenkins, stripRemote } from './jenkins';

const HEAD = 'c'.repeat(40);
const none = () => null;

describe('Jenkins', () => {
  it('is not detected without JENKINS_URL', () => {
    expect(jenkins({ GIT_BRANCH: 'origin/main', GIT_COMMIT: HEAD }, none)).toBeNull();
  });

  it('strips the remote from GIT_BRANCH', () => {
    expect(jenkins({ JENKINS_URL: 'http://ci/', GIT_BRANCH: 'origin/feature/fir', GIT_COMMIT: HEAD }, none)).toMatchObject({ branch: 'feature/fir', commit: HEAD });
    expect(stripRemote('refs/remotes/origin/main')).toBe('main');
    expect(stripRemote('refs/heads/main')).toBe('main');
  });

  it('takes the source and target of a change request, not BRANCH_NAME "PR-12"', () => {
    const c = jenkins({ JENKINS_URL: 'http://ci/', BRANCH_NAME: 'PR-12', CHANGE_ID: '12', CHANGE_BRANCH: 'feature/fir', CHANGE_TARGET: 'main', GIT_COMMIT: HEAD }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
  });

  it('prefers the multibranch BRANCH_NAME over GIT_BRANCH', () => {
    expect(jenkins({ JENKINS_URL: 'http://ci/', BRANCH_NAME: 'release/2', GIT_BRANCH: 'origin/release/2', GIT_COMMIT: HEAD }, none)!.branch).toBe('release/2');
  });
});
