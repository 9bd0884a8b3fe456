// Branch, commit and merge-base from git itself, for uploads: `git rev-parse` / `symbolic-ref`,
// a branch that points at a detached HEAD, and `git merge-base`. A plain `pleat check` reads the
// .git folder instead (cli/git.ts) and starts no process.
import { execFileSync } from 'node:child_process';
import { firstLine, hexCommit, shortRef } from './types';

/** Runs git and returns its trimmed output, or null when git fails or is not installed. */
export type GitRunner = (args: string[], cwd: string) => string | null;

export const runGit: GitRunner = (args, cwd) => {
  try {
    return execFileSync('git', args, {
      cwd,
      encoding: 'utf8',
      stdio: ['ignore', 'pipe', 'ignore'],
      timeout: 15_000,
      // Never wait for a password prompt in CI.
      env: { ...process.env, GIT_TERMINAL_PROMPT: '0' },
    }).trim();
  } catch {
    return null;
  }
};

export interface GitHead {
  branch: string | null;
  commit: string | null;
  notes: string[];
}

/** The checked-out commit and its branch. On a detached HEAD (usual in CI), a branch that
 *  points at the same commit is taken: a local one first, else a remote-tracking one. */
export function gitHead(cwd: string, git: GitRunner = runGit): GitHead {
  const commit = hexCommit(git(['rev-parse', '--verify', '-q', 'HEAD^{commit}'], cwd));
  if (!commit) return { branch: null, commit: null, notes: [] };
  const symbolic = git(['symbolic-ref', '-q', '--short', 'HEAD'], cwd);
  if (symbolic) return { branch: symbolic, commit, notes: [] };
  const refs = (git(['for-each-ref', '--points-at', commit, '--format=%(refname)', 'refs/heads', 'refs/remotes'], cwd) ?? '')
    .split('\n')
    .map((s) => s.trim())
    .filter(Boolean);
  const local = refs.find((r) => r.startsWith('refs/heads/'));
  if (local) return { branch: shortRef(local), commit, notes: [] };
  const remote = refs.find((r) => r.startsWith('refs/remotes/') && !r.endsWith('/HEAD'));
  if (remote) return { branch: remote.replace(/^refs\/remotes\/[^/]+\//, ''), commit, notes: [] };
  return { branch: null, commit, notes: [`HEAD is detached at ${commit.slice(0, 12)} and no branch points at it; set PLEAT_BRANCH`] };
}

/** The remote's default branch (origin/HEAD), e.g. "main", when the clone recorded it. */
export function remoteDefaultBranch(cwd: string, git: GitRunner = runGit): string | null {
  const ref = git(['symbolic-ref', '-q', '--short', 'refs/remotes/origin/HEAD'], cwd);
  return ref ? ref.replace(/^origin\//, '') || null : null;
}

/**
 * The merge-base of `commit` (the head that was checked; HEAD when git does not have it) with
 * the base branch, tried as origin/<base> first (what CI clones have), then <base>. Null in a
 * shallow clone that lacks the history, or when the base branch is not there.
 */
export function mergeBase(cwd: string, commit: string | null, base: string, git: GitRunner = runGit): string | null {
  // A ref name never starts with "-"; refusing it keeps the value from being read as an option.
  if (base.startsWith('-')) return null;
  const head = commit && git(['cat-file', '-e', `${commit}^{commit}`], cwd) !== null ? commit : 'HEAD';
  for (const ref of [`origin/${base}`, base]) {
    if (git(['rev-parse', '--verify', '-q', `${ref}^{commit}`], cwd) === null) continue;
    const mb = hexCommit(git(['merge-base', head, ref], cwd));
    if (mb) return mb;
  }
  return null;
}

/** First line of the commit's message and its author's name (`git log -1`), or nulls when git does not have the commit. */
export function commitFacts(cwd: string, commit: string, git: GitRunner = runGit): { message: string | null; author: string | null } {
  if (commit.startsWith('-')) return { message: null, author: null };
  const out = git(['log', '-1', '--format=%an%x00%s', commit, '--'], cwd);
  if (out === null) return { message: null, author: null };
  const [author, subject] = out.split('\0');
  return { message: firstLine(subject), author: firstLine(author, 200) };
}
