// Variable names and their meaning: Travis CI documentation, "Environment Variables" (in a pull
// request build TRAVIS_BRANCH is the target branch and TRAVIS_COMMIT the merge; the source is
// TRAVIS_PULL_REQUEST_BRANCH / TRAVIS_PULL_REQUEST_SHA). Recalled from memory.
import { describe, expect, it } from 'vitest';
import { travis } from './travis';

const HEAD = '5'.repeat(40);
const MERGE = '6'.repeat(40);
const none = () => null;

describe('Travis CI', () => {
  it('is not detected without TRAVIS', () => {
    expect(travis({ TRAVIS_BRANCH: 'main', TRAVIS_COMMIT: HEAD }, none)).toBeNull();
  });
  it('takes a push build as it is', () => {
    expect(travis({ TRAVIS: 'true', TRAVIS_PULL_REQUEST: 'false', TRAVIS_BRANCH: 'main', TRAVIS_COMMIT: HEAD }, none)).toMatchObject({ branch: 'main', commit: HEAD, baseBranch: null });
  });
  it('in a pull request, takes TRAVIS_BRANCH as the target and the source head as the commit', () => {
    const c = travis({
      TRAVIS: 'true', TRAVIS_PULL_REQUEST: '42', TRAVIS_BRANCH: 'main', TRAVIS_COMMIT: MERGE,
      TRAVIS_PULL_REQUEST_BRANCH: 'feature/fir', TRAVIS_PULL_REQUEST_SHA: HEAD,
    }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
  });
});
