// PLEAT_BRANCH, PLEAT_COMMIT, PLEAT_BASE_BRANCH and PLEAT_BASE_COMMIT: set by hand for a CI
// system pleat does not know, or to correct one. Each wins over the CI's and git's value for
// its own field only.
import { hexCommit, val, type Env } from './types';

export interface Override {
  branch: string | null;
  commit: string | null;
  baseBranch: string | null;
  baseCommit: string | null;
  /** Values that cannot be right (a commit that is not hex, a branch with spaces). */
  problems: string[];
}

export function readOverride(env: Env): Override {
  const problems: string[] = [];
  const branch = (name: string): string | null => {
    const v = val(env, name);
    if (v !== null && !/^[^\s\x00-\x1f]{1,255}$/.test(v)) {
      problems.push(`${name} must be a branch name without spaces (1 to 255 characters)`);
      return null;
    }
    return v;
  };
  const commit = (name: string): string | null => {
    const v = val(env, name);
    if (v === null) return null;
    const c = hexCommit(v);
    if (!c) problems.push(`${name} must be a commit id of 7 to 64 hex digits`);
    return c;
  };
  return {
    branch: branch('PLEAT_BRANCH'),
    commit: commit('PLEAT_COMMIT'),
    baseBranch: branch('PLEAT_BASE_BRANCH'),
    baseCommit: commit('PLEAT_BASE_COMMIT'),
    problems,
  };
}
