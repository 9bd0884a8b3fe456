// CircleCI builds the pushed commit itself (no merge preview): CIRCLE_SHA1 and CIRCLE_BRANCH.
// A tag build has CIRCLE_TAG and no branch. CircleCI names no target branch for a pull
// request, so the base comes from PLEAT_BASE_BRANCH or the remote's default branch.
import { context, firstVal, hexCommit, val, type Detector } from './types';

export const circleci: Detector = (env) => {
  if (val(env, 'CIRCLECI') !== 'true') return null;
  return context('CircleCI', {
    branch: firstVal(env, 'CIRCLE_BRANCH', 'CIRCLE_TAG'),
    commit: hexCommit(val(env, 'CIRCLE_SHA1')),
  });
};
