// Branch and commit for the report: from the usual CI variables first, else read from the
// repository's .git folder directly (no `git` process, so a check starts fast).
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Report } from '../shared/types';

type GitInfo = Report['git'];

/** CI variables per vendor: branch, commit, and the target branch of a merge request. */
const VENDORS: { branch: string[]; commit: string[]; base?: string[] }[] = [
  { branch: ['PLEAT_BRANCH'], commit: ['PLEAT_COMMIT'], base: ['PLEAT_BASE_BRANCH'] },
  // GitHub Actions: for a pull request GITHUB_HEAD_REF is the source branch.
  { branch: ['GITHUB_HEAD_REF', 'GITHUB_REF_NAME'], commit: ['GITHUB_SHA'], base: ['GITHUB_BASE_REF'] },
  { branch: ['CI_MERGE_REQUEST_SOURCE_BRANCH_NAME', 'CI_COMMIT_BRANCH', 'CI_COMMIT_REF_NAME'], commit: ['CI_COMMIT_SHA'], base: ['CI_MERGE_REQUEST_TARGET_BRANCH_NAME'] },
  { branch: ['BUILDKITE_BRANCH'], commit: ['BUILDKITE_COMMIT'], base: ['BUILDKITE_PULL_REQUEST_BASE_BRANCH'] },
  { branch: ['CIRCLE_BRANCH'], commit: ['CIRCLE_SHA1'] },
  { branch: ['BUILD_SOURCEBRANCHNAME'], commit: ['BUILD_SOURCEVERSION'], base: ['SYSTEM_PULLREQUEST_TARGETBRANCH'] },
  { branch: ['BITBUCKET_BRANCH'], commit: ['BITBUCKET_COMMIT'], base: ['BITBUCKET_PR_DESTINATION_BRANCH'] },
  // Jenkins git plugin: GIT_BRANCH is often "origin/main".
  { branch: ['CHANGE_BRANCH', 'BRANCH_NAME', 'GIT_BRANCH'], commit: ['GIT_COMMIT'], base: ['CHANGE_TARGET'] },
];

function first(env: NodeJS.ProcessEnv, names: string[] | undefined): string | null {
  for (const n of names ?? []) {
    const v = env[n];
    if (v && v.trim() !== '') return v.trim();
  }
  return null;
}

export function gitInfo(cwd: string, env: NodeJS.ProcessEnv = process.env): GitInfo {
  let branch: string | null = null;
  let commit: string | null = null;
  let baseBranch: string | null = null;
  for (const v of VENDORS) {
    const c = first(env, v.commit);
    const b = first(env, v.branch);
    if (c || b) {
      commit = c;
      branch = b ? b.replace(/^origin\//, '').replace(/^refs\/heads\//, '') : null;
      baseBranch = first(env, v.base);
      break;
    }
  }
  if (!branch || !commit) {
    const local = readGit(cwd);
    branch = branch ?? local.branch;
    commit = commit ?? local.commit;
  }
  const info: GitInfo = { branch, commit };
  if (baseBranch) info.baseBranch = baseBranch;
  return info;
}

/** The work tree root holding `cwd`, or null outside a repository. */
export function gitRoot(cwd: string): string | null {
  return findDotGit(cwd)?.root ?? null;
}

function findDotGit(cwd: string): { root: string; gitDir: string } | null {
  let dir = path.resolve(cwd);
  for (;;) {
    const dotGit = path.join(dir, '.git');
    if (existsSync(dotGit)) {
      try {
        if (statSync(dotGit).isDirectory()) return { root: dir, gitDir: dotGit };
        // A worktree or submodule: ".git" is a file naming the real folder.
        const m = /^gitdir:\s*(.+)\s*$/m.exec(readFileSync(dotGit, 'utf8'));
        if (m) return { root: dir, gitDir: path.resolve(dir, m[1].trim()) };
      } catch {
        return null;
      }
    }
    const parent = path.dirname(dir);
    if (parent === dir) return null;
    dir = parent;
  }
}

function readGit(cwd: string): { branch: string | null; commit: string | null } {
  const found = findDotGit(cwd);
  if (!found) return { branch: null, commit: null };
  try {
    const { gitDir } = found;
    let commonDir = gitDir;
    const commonFile = path.join(gitDir, 'commondir');
    if (existsSync(commonFile)) commonDir = path.resolve(gitDir, readFileSync(commonFile, 'utf8').trim());
    const head = readFileSync(path.join(gitDir, 'HEAD'), 'utf8').trim();
    const ref = /^ref:\s*(.+)$/.exec(head);
    if (!ref) return { branch: null, commit: /^[0-9a-f]{40,64}$/.test(head) ? head : null };
    const refName = ref[1].trim();
    const branch = refName.replace(/^refs\/heads\//, '');
    for (const d of [gitDir, commonDir]) {
      const f = path.join(d, refName);
      if (existsSync(f)) return { branch, commit: readFileSync(f, 'utf8').trim() || null };
    }
    const packed = path.join(commonDir, 'packed-refs');
    if (existsSync(packed)) {
      for (const line of readFileSync(packed, 'utf8').split('\n')) {
        const [sha, name] = line.trim().split(' ');
        if (name === refName && /^[0-9a-f]{40,64}$/.test(sha)) return { branch, commit: sha };
      }
    }
    return { branch, commit: null }; // a branch without commits yet
  } catch {
    return { branch: null, commit: null };
  }
}
