// Buildkite. BUILDKITE_COMMIT may be the literal "HEAD" for a build started by hand; then the
// commit comes from git. BUILDKITE_PULL_REQUEST is "false" outside pull requests, and the
// target is BUILDKITE_PULL_REQUEST_BASE_BRANCH.
import { authorName, context, firstLine, hexCommit, val, type Detector } from './types';

export const buildkite: Detector = (env) => {
  if (val(env, 'BUILDKITE') !== 'true') return null;
  const pr = val(env, 'BUILDKITE_PULL_REQUEST');
  return context('Buildkite', {
    branch: val(env, 'BUILDKITE_BRANCH'),
    commit: hexCommit(val(env, 'BUILDKITE_COMMIT')),
    message: firstLine(val(env, 'BUILDKITE_MESSAGE')),
    author: authorName(val(env, 'BUILDKITE_BUILD_AUTHOR')),
    baseBranch: pr && pr !== 'false' ? val(env, 'BUILDKITE_PULL_REQUEST_BASE_BRANCH') : null,
  });
};
