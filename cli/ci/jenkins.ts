// Jenkins (Pipeline with the git plugin, multibranch). BRANCH_NAME is "PR-12" for a change
// request, whose source and target are CHANGE_BRANCH / CHANGE_TARGET. GIT_BRANCH carries the
// remote ("origin/main"), which is stripped. GIT_COMMIT is the commit Jenkins checked out (for a
// change request built merged with its target, that merge: docs/cli.md says to set PLEAT_COMMIT).
import { firstVal, context, hexCommit, val, type Detector } from './types';

/** "origin/main" -> "main", "refs/remotes/origin/main" -> "main", "refs/heads/x" -> "x". */
export function stripRemote(branch: string | null): string | null {
  if (branch === null) return null;
  return branch.replace(/^refs\/remotes\/[^/]+\//, '').replace(/^refs\/heads\//, '').replace(/^origin\//, '') || null;
}

export const jenkins: Detector = (env) => {
  if (!val(env, 'JENKINS_URL') && !val(env, 'JENKINS_HOME')) return null;
  return context('Jenkins', {
    branch: firstVal(env, 'CHANGE_BRANCH', 'GIT_LOCAL_BRANCH', 'BRANCH_NAME') ?? stripRemote(val(env, 'GIT_BRANCH')),
    commit: hexCommit(val(env, 'GIT_COMMIT')),
    baseBranch: val(env, 'CHANGE_TARGET'),
  });
};
