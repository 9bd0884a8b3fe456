// Variable names: Bitbucket Pipelines documentation, "Variables and secrets" (BITBUCKET_BRANCH,
// BITBUCKET_COMMIT, BITBUCKET_PR_DESTINATION_BRANCH, BITBUCKET_TAG). Recalled from memory.
import { describe, expect, it } from 'vitest';
import { bitbucket } from './bitbucket';

const HEAD = '4'.repeat(40);
const none = () => null;

describe('Bitbucket Pipelines', () => {
  it('is not detected outside Bitbucket', () => {
    expect(bitbucket({ BITBUCKET_BRANCH: 'main' }, none)).toBeNull();
  });
  it('takes the source branch and the target of a pull request', () => {
    const c = bitbucket({ BITBUCKET_BUILD_NUMBER: '31', BITBUCKET_BRANCH: 'feature/fir', BITBUCKET_COMMIT: HEAD, BITBUCKET_PR_ID: '3', BITBUCKET_PR_DESTINATION_BRANCH: 'main' }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
  });
  it('files a tag pipeline under the tag', () => {
    expect(bitbucket({ BITBUCKET_BUILD_NUMBER: '32', BITBUCKET_TAG: 'v2', BITBUCKET_COMMIT: HEAD }, none)!.branch).toBe('v2');
  });
});
