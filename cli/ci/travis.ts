// Travis CI. In a pull-request build TRAVIS_BRANCH is the TARGET branch and TRAVIS_COMMIT the
// merge preview; the source is TRAVIS_PULL_REQUEST_BRANCH and its head TRAVIS_PULL_REQUEST_SHA.
// TRAVIS_PULL_REQUEST is "false" outside pull requests.
import { context, firstLine, hexCommit, val, type Detector } from './types';

export const travis: Detector = (env) => {
  if (val(env, 'TRAVIS') !== 'true') return null;
  const pr = val(env, 'TRAVIS_PULL_REQUEST');
  if (pr && pr !== 'false') {
    return context('Travis CI', {
      branch: val(env, 'TRAVIS_PULL_REQUEST_BRANCH'),
      commit: hexCommit(val(env, 'TRAVIS_PULL_REQUEST_SHA')) ?? hexCommit(val(env, 'TRAVIS_COMMIT')),
      baseBranch: val(env, 'TRAVIS_BRANCH'),
    });
  }
  return context('Travis CI', {
    branch: val(env, 'TRAVIS_BRANCH'),
    commit: hexCommit(val(env, 'TRAVIS_COMMIT')),
    message: firstLine(val(env, 'TRAVIS_COMMIT_MESSAGE')),
  });
};
