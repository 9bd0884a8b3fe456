// Bitbucket Pipelines. BITBUCKET_BRANCH is the source branch also in a pull-request pipeline,
// and BITBUCKET_COMMIT the commit that started the build (the source head, not a merge); the
// target is BITBUCKET_PR_DESTINATION_BRANCH. A tag pipeline has BITBUCKET_TAG and no branch.
import { context, firstVal, hexCommit, val, type Detector } from './types';

export const bitbucket: Detector = (env) => {
  if (!val(env, 'BITBUCKET_BUILD_NUMBER') && !val(env, 'BITBUCKET_COMMIT')) return null;
  return context('Bitbucket Pipelines', {
    branch: firstVal(env, 'BITBUCKET_BRANCH', 'BITBUCKET_TAG'),
    commit: hexCommit(val(env, 'BITBUCKET_COMMIT')),
    baseBranch: val(env, 'BITBUCKET_PR_DESTINATION_BRANCH'),
  });
};
