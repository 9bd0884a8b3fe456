// GitLab CI. In a merge request pipeline the source and target branches have their own
// variables; in a "merged results" pipeline CI_COMMIT_SHA is the merge preview and the head is
// CI_MERGE_REQUEST_SOURCE_BRANCH_SHA. CI_MERGE_REQUEST_DIFF_BASE_SHA is the merge-base GitLab
// computed, so no git history is needed for it. CI_COMMIT_BRANCH is unset in tag and merge
// request pipelines; CI_COMMIT_REF_NAME is the tag there.
import { authorName, context, firstLine, firstVal, hexCommit, val, type Detector } from './types';

export const gitlab: Detector = (env) => {
  if (val(env, 'GITLAB_CI') !== 'true') return null;
  const source = val(env, 'CI_MERGE_REQUEST_SOURCE_BRANCH_NAME');
  const commit = hexCommit(val(env, 'CI_MERGE_REQUEST_SOURCE_BRANCH_SHA')) ?? hexCommit(val(env, 'CI_COMMIT_SHA'));
  // CI_COMMIT_TITLE / _AUTHOR describe CI_COMMIT_SHA, which is a merge in merged-results pipelines.
  const own = commit !== null && hexCommit(val(env, 'CI_COMMIT_SHA')) === commit;
  return context('GitLab CI', {
    branch: source ?? firstVal(env, 'CI_COMMIT_BRANCH', 'CI_COMMIT_REF_NAME'),
    commit,
    message: own ? firstLine(val(env, 'CI_COMMIT_TITLE') ?? val(env, 'CI_COMMIT_MESSAGE')) : null,
    author: own ? authorName(val(env, 'CI_COMMIT_AUTHOR')) : null,
    baseBranch: val(env, 'CI_MERGE_REQUEST_TARGET_BRANCH_NAME'),
    baseCommit: source ? hexCommit(val(env, 'CI_MERGE_REQUEST_DIFF_BASE_SHA')) : null,
  });
};
