// Variable names: Buildkite documentation, "Environment variables" (BUILDKITE_BRANCH,
// BUILDKITE_COMMIT, which can be "HEAD", BUILDKITE_PULL_REQUEST, BUILDKITE_PULL_REQUEST_BASE_BRANCH).
// Recalled from memory.
import { describe, expect, it } from 'vitest';
import { buildkite } from './buildkite';

const HEAD = '7'.repeat(40);
const none = () => null;

describe('Buildkite', () => {
  it('is not detected without BUILDKITE', () => {
    expect(buildkite({ BUILDKITE_BRANCH: 'main' }, none)).toBeNull();
  });
  it('takes the target of a pull request', () => {
    const c = buildkite({ BUILDKITE: 'true', BUILDKITE_BRANCH: 'feature/fir', BUILDKITE_COMMIT: HEAD, BUILDKITE_PULL_REQUEST: '8', BUILDKITE_PULL_REQUEST_BASE_BRANCH: 'main' }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
  });
  it('leaves the commit to git when Buildkite says "HEAD"', () => {
    const c = buildkite({ BUILDKITE: 'true', BUILDKITE_BRANCH: 'main', BUILDKITE_COMMIT: 'HEAD', BUILDKITE_PULL_REQUEST: 'false', BUILDKITE_PULL_REQUEST_BASE_BRANCH: '' }, none);
    expect(c).toMatchObject({ branch: 'main', commit: null, baseBranch: null });
  });
});
