// Azure Pipelines. BUILD_SOURCEBRANCH is the full ref (refs/heads/feature/x);
// BUILD_SOURCEBRANCHNAME keeps only the last segment ("x") and is not used. For a pull request
// the source ref is refs/pull/N/merge and BUILD_SOURCEVERSION the merge preview: the branches
// come from SYSTEM_PULLREQUEST_SOURCEBRANCH / TARGETBRANCH and the head commit from
// SYSTEM_PULLREQUEST_SOURCECOMMITID when Azure sets it.
import { authorName, context, firstLine, hexCommit, shortRef, val, type Detector } from './types';

export const azure: Detector = (env) => {
  if ((val(env, 'TF_BUILD') ?? '').toLowerCase() !== 'true') return null;
  const prSource = val(env, 'SYSTEM_PULLREQUEST_SOURCEBRANCH');
  if (prSource) {
    const head = hexCommit(val(env, 'SYSTEM_PULLREQUEST_SOURCECOMMITID'));
    return context('Azure Pipelines', {
      branch: shortRef(prSource),
      commit: head ?? hexCommit(val(env, 'BUILD_SOURCEVERSION')),
      baseBranch: shortRef(val(env, 'SYSTEM_PULLREQUEST_TARGETBRANCH')),
      notes: head ? [] : ['pull request without SYSTEM_PULLREQUEST_SOURCECOMMITID: BUILD_SOURCEVERSION is the merge preview; set PLEAT_COMMIT to the head commit'],
    });
  }
  const ref = val(env, 'BUILD_SOURCEBRANCH');
  return context('Azure Pipelines', {
    branch: ref?.startsWith('refs/pull/') ? null : shortRef(ref),
    commit: hexCommit(val(env, 'BUILD_SOURCEVERSION')),
    message: firstLine(val(env, 'BUILD_SOURCEVERSIONMESSAGE')),
    author: authorName(val(env, 'BUILD_SOURCEVERSIONAUTHOR')),
  });
};
