// Against real git (2.x from the system): a throw-away repository with a base branch, a feature
// branch and a detached HEAD; what git itself answers is the reference.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { commitFacts, gitHead, mergeBase, remoteDefaultBranch } from './git';

let dir: string;
const env = { ...process.env, GIT_AUTHOR_NAME: 't', GIT_AUTHOR_EMAIL: 't@example.test', GIT_COMMITTER_NAME: 't', GIT_COMMITTER_EMAIL: 't@example.test', GIT_CONFIG_NOSYSTEM: '1', HOME: tmpdir() };
const git = (...args: string[]) => execFileSync('git', args, { cwd: dir, env, encoding: 'utf8' }).trim();
const commit = (msg: string) => {
  writeFileSync(path.join(dir, 'f.txt'), `${msg}\n`);
  git('add', 'f.txt');
  git('commit', '-q', '-m', msg);
  return git('rev-parse', 'HEAD');
};
let forkPoint: string;
let featureHead: string;

beforeAll(() => {
  dir = mkdtempSync(path.join(tmpdir(), 'pleat-git-'));
  git('init', '-q', '-b', 'main');
  commit('one');
  forkPoint = commit('two');
  git('checkout', '-q', '-b', 'feature/fir');
  featureHead = commit('three');
  git('checkout', '-q', 'main');
  commit('four'); // main moves on after the fork
  git('checkout', '-q', 'feature/fir');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('git fallback', () => {
  it('reads the branch and commit of HEAD', () => {
    expect(gitHead(dir)).toEqual({ branch: 'feature/fir', commit: featureHead, notes: [] });
  });

  it('on a detached HEAD, takes a branch that points at the commit', () => {
    git('checkout', '-q', '--detach', featureHead);
    try {
      expect(gitHead(dir)).toMatchObject({ branch: 'feature/fir', commit: featureHead });
    } finally {
      git('checkout', '-q', 'feature/fir');
    }
  });

  it('on a detached HEAD that no branch points at, leaves the branch unknown with a note', () => {
    git('checkout', '-q', '--detach', 'HEAD~1');
    try {
      const h = gitHead(dir);
      expect(h.commit).toBe(forkPoint);
      expect(h.branch).toBeNull();
      expect(h.notes.join(' ')).toMatch(/PLEAT_BRANCH/);
    } finally {
      git('checkout', '-q', 'feature/fir');
    }
  });

  it('computes the merge-base with the base branch as git merge-base does', () => {
    expect(mergeBase(dir, featureHead, 'main')).toBe(git('merge-base', 'HEAD', 'main'));
    expect(mergeBase(dir, featureHead, 'main')).toBe(forkPoint);
  });

  it('answers null for a base branch that does not exist, or that looks like an option', () => {
    expect(mergeBase(dir, featureHead, 'no-such-branch')).toBeNull();
    expect(mergeBase(dir, featureHead, '--all')).toBeNull();
  });

  it('answers null everywhere outside a repository', () => {
    const outside = mkdtempSync(path.join(tmpdir(), 'pleat-nogit-'));
    try {
      expect(gitHead(outside)).toEqual({ branch: null, commit: null, notes: [] });
      expect(remoteDefaultBranch(outside)).toBeNull();
    } finally {
      rmSync(outside, { recursive: true, force: true });
    }
  });

  it('reads the first line of the message and the author name of a commit', () => {
    // Its author is GIT_AUTHOR_NAME=t (set above); the message is the one given to git commit.
    writeFileSync(path.join(dir, 'f.txt'), 'five\n');
    git('add', 'f.txt');
    git('commit', '-q', '-m', 'Fold the equaliser at N=5', '-m', 'Second paragraph.');
    const head = git('rev-parse', 'HEAD');
    expect(commitFacts(dir, head)).toEqual({ message: 'Fold the equaliser at N=5', author: 't' });
    expect(commitFacts(dir, 'f'.repeat(40))).toEqual({ message: null, author: null });
  });
});
