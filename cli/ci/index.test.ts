// The order of the sources of build facts: the report's own, PLEAT_* overrides, the CI system,
// then git. Git answers come from a stub here (cli/ci/git.test.ts runs the real git).
import { describe, expect, it } from 'vitest';
import { DETECTORS, detectBuild, detectCi, reportGit } from './index';
import type { GitRunner } from './git';

const A = 'a'.repeat(40);
const B = 'b'.repeat(40);
const C = 'c'.repeat(40);
const none = () => null;

/** A fake git: HEAD is on `branch` at `commit`; main and the merge-base as given. */
function fakeGit(o: { branch?: string | null; commit?: string | null; mergeBase?: string | null; originHead?: string | null }): GitRunner & { calls: string[][] } {
  const calls: string[][] = [];
  const run = Object.assign((args: string[]): string | null => {
    calls.push(args);
    const key = args.join(' ');
    if (key.startsWith('rev-parse --verify -q HEAD')) return o.commit ?? null;
    if (key === 'symbolic-ref -q --short HEAD') return o.branch ?? null;
    if (key === 'symbolic-ref -q --short refs/remotes/origin/HEAD') return o.originHead ?? null;
    if (key.startsWith('for-each-ref')) return '';
    if (key.startsWith('cat-file')) return '';
    if (key.startsWith('rev-parse --verify -q origin/')) return o.mergeBase ? C : null;
    if (key.startsWith('merge-base')) return o.mergeBase ?? null;
    return null;
  }, { calls });
  return run;
}

describe('detectBuild', () => {
  it('every vendor file is tried, and none claims an empty environment', () => {
    expect(DETECTORS.length).toBe(8);
    expect(detectCi({}, none)).toBeNull();
  });

  it('falls back to git for a local run, and computes the merge-base with the remote default branch', () => {
    const git = fakeGit({ branch: 'feature/fir', commit: A, mergeBase: B, originHead: 'origin/main' });
    const { context } = detectBuild({ cwd: '/x', env: {}, git: 'process', mergeBase: true, runner: git, readFile: none });
    expect(context).toMatchObject({ vendor: 'local', branch: 'feature/fir', commit: A, baseBranch: null, baseCommit: B });
    expect(git.calls).toContainEqual(['merge-base', A, 'origin/main']);
  });

  it('computes no merge-base on the base branch itself', () => {
    const git = fakeGit({ branch: 'main', commit: A, mergeBase: A, originHead: 'origin/main' });
    const { context } = detectBuild({ cwd: '/x', env: {}, git: 'process', mergeBase: true, runner: git, readFile: none });
    expect(context.baseCommit).toBeNull();
  });

  it('lets PLEAT_* win field by field over the CI', () => {
    const env = { TRAVIS: 'true', TRAVIS_PULL_REQUEST: 'false', TRAVIS_BRANCH: 'main', TRAVIS_COMMIT: A, PLEAT_BRANCH: 'release/3', PLEAT_BASE_COMMIT: B };
    const { context, problems } = detectBuild({ cwd: '/x', env, git: 'process', runner: fakeGit({}), readFile: none });
    expect(problems).toEqual([]);
    expect(context).toMatchObject({ vendor: 'Travis CI', branch: 'release/3', commit: A, baseCommit: B });
  });

  it('refuses a PLEAT_COMMIT that is not a commit id', () => {
    const { problems } = detectBuild({ cwd: '/x', env: { PLEAT_COMMIT: 'not-a-sha' }, git: 'process', runner: fakeGit({}), readFile: none });
    expect(problems.join(' ')).toMatch(/PLEAT_COMMIT must be a commit id/);
  });

  it("does not pair the CI's commit with the branch of a different local commit", () => {
    // GitHub pull-request ref without payload: the CI gives a commit but no branch.
    const env = { GITHUB_ACTIONS: 'true', GITHUB_REF: 'refs/pull/3/merge', GITHUB_SHA: A };
    const other = detectBuild({ cwd: '/x', env, git: 'process', runner: fakeGit({ branch: 'main', commit: B }), readFile: none });
    expect(other.context).toMatchObject({ branch: null, commit: A });
    const same = detectBuild({ cwd: '/x', env, git: 'process', runner: fakeGit({ branch: 'feature', commit: A }), readFile: none });
    expect(same.context).toMatchObject({ branch: 'feature', commit: A });
  });

  it("keeps a report's own facts over the environment's", () => {
    const env = { CIRCLECI: 'true', CIRCLE_BRANCH: 'other', CIRCLE_SHA1: B };
    const { context } = detectBuild({ cwd: '/x', env, git: 'process', runner: fakeGit({}), readFile: none, known: { branch: 'main', commit: A } });
    expect(context).toMatchObject({ branch: 'main', commit: A });
  });

  it('notes a missing merge-base when the base branch is known', () => {
    const env = { GITLAB_CI: 'true', CI_COMMIT_SHA: A, CI_MERGE_REQUEST_SOURCE_BRANCH_NAME: 'f', CI_MERGE_REQUEST_TARGET_BRANCH_NAME: 'main' };
    const { context } = detectBuild({ cwd: '/x', env, git: 'process', mergeBase: true, runner: fakeGit({ mergeBase: null }), readFile: none });
    expect(context.baseCommit).toBeNull();
    expect(context.notes.join(' ')).toMatch(/no merge-base with main/);
  });

  it('puts base fields into the report only when known', () => {
    expect(reportGit({ vendor: 'x', branch: 'b', commit: A, baseBranch: null, baseCommit: null, message: null, author: null, notes: [] })).toEqual({ branch: 'b', commit: A });
    expect(reportGit({ vendor: 'x', branch: 'b', commit: A, baseBranch: 'main', baseCommit: B, message: 'Tune the loop', author: 'Dev', notes: [] })).toEqual({ branch: 'b', commit: A, baseBranch: 'main', baseCommit: B, message: 'Tune the loop', author: 'Dev' });
  });
});
