// Variable names: CircleCI documentation, "Project values and variables" (CIRCLECI,
// CIRCLE_BRANCH, CIRCLE_SHA1, CIRCLE_TAG). Recalled from memory.
import { describe, expect, it } from 'vitest';
import { circleci } from './circleci';

const HEAD = 'd'.repeat(40);
const none = () => null;

describe('CircleCI', () => {
  it('is not detected without CIRCLECI', () => {
    expect(circleci({ CIRCLE_BRANCH: 'main', CIRCLE_SHA1: HEAD }, none)).toBeNull();
  });
  it('takes branch and commit', () => {
    expect(circleci({ CIRCLECI: 'true', CIRCLE_BRANCH: 'feature/fir', CIRCLE_SHA1: HEAD }, none)).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: null });
  });
  it('files a tag build under the tag', () => {
    expect(circleci({ CIRCLECI: 'true', CIRCLE_TAG: 'v1.2', CIRCLE_SHA1: HEAD }, none)!.branch).toBe('v1.2');
  });
});
