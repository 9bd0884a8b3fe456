// Branch and commit read from the repository's .git folder directly (no `git` process, so a
// check starts fast). CI variables are read by cli/ci/ (one file per vendor), which falls back
// to this; uploads ask git itself (cli/ci/git.ts). Both parse refs and commit ids with the
// helpers of cli/ci/types.ts.
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { hexCommit, shortRef } from './ci/types';

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

/** The checked-out branch and commit as the .git folder records them; null where unknown. */
export function gitInfo(cwd: string): { branch: string | null; commit: string | null } {
  const found = findDotGit(cwd);
  if (!found) return { branch: null, commit: null };
  try {
    const { gitDir } = found;
    let commonDir = gitDir;
    const commonFile = path.join(gitDir, 'commondir');
    if (existsSync(commonFile)) commonDir = path.resolve(gitDir, readFileSync(commonFile, 'utf8').trim());
    const head = readFileSync(path.join(gitDir, 'HEAD'), 'utf8').trim();
    const ref = /^ref:\s*(.+)$/.exec(head);
    if (!ref) return { branch: null, commit: hexCommit(head) };
    const refName = ref[1].trim();
    const branch = shortRef(refName);
    for (const d of [gitDir, commonDir]) {
      const f = path.join(d, refName);
      if (existsSync(f)) return { branch, commit: hexCommit(readFileSync(f, 'utf8').trim() || null) };
    }
    const packed = path.join(commonDir, 'packed-refs');
    if (existsSync(packed)) {
      for (const line of readFileSync(packed, 'utf8').split('\n')) {
        const [sha, name] = line.trim().split(' ');
        if (name === refName && hexCommit(sha)) return { branch, commit: hexCommit(sha) };
      }
    }
    return { branch, commit: null }; // a branch without commits yet
  } catch {
    return { branch: null, commit: null };
  }
}
