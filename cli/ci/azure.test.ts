// Variable names and their meaning: Azure Pipelines documentation, "Predefined variables"
// (Build.SourceBranch as a full ref, Build.SourceBranchName as its last segment only,
// System.PullRequest.* for pull requests, exported as upper case with "_"). Recalled from memory.
import { describe, expect, it } from 'vitest';
import { azure } from './azure';

const HEAD = 'e'.repeat(40);
const MERGE = 'f'.repeat(40);
const none = () => null;

describe('Azure Pipelines', () => {
  it('is not detected without TF_BUILD', () => {
    expect(azure({ BUILD_SOURCEBRANCH: 'refs/heads/main', BUILD_SOURCEVERSION: HEAD }, none)).toBeNull();
  });
  it('keeps the whole branch name from BUILD_SOURCEBRANCH (not only its last segment)', () => {
    const c = azure({ TF_BUILD: 'True', BUILD_SOURCEBRANCH: 'refs/heads/feature/fir', BUILD_SOURCEBRANCHNAME: 'fir', BUILD_SOURCEVERSION: HEAD }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD });
  });
  it('takes the source branch, target and head commit of a pull request', () => {
    const c = azure({
      TF_BUILD: 'True', BUILD_SOURCEBRANCH: 'refs/pull/5/merge', BUILD_SOURCEVERSION: MERGE,
      SYSTEM_PULLREQUEST_SOURCEBRANCH: 'refs/heads/feature/fir', SYSTEM_PULLREQUEST_TARGETBRANCH: 'refs/heads/main', SYSTEM_PULLREQUEST_SOURCECOMMITID: HEAD,
    }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
  });
  it('notes the merge preview when the head commit is not given', () => {
    const c = azure({ TF_BUILD: 'True', BUILD_SOURCEVERSION: MERGE, SYSTEM_PULLREQUEST_SOURCEBRANCH: 'feature/fir', SYSTEM_PULLREQUEST_TARGETBRANCH: 'main' }, none);
    expect(c).toMatchObject({ branch: 'feature/fir', commit: MERGE, baseBranch: 'main' });
    expect(c!.notes.join(' ')).toMatch(/merge preview/);
  });
  it('never takes refs/pull/N/merge for a branch', () => {
    expect(azure({ TF_BUILD: 'True', BUILD_SOURCEBRANCH: 'refs/pull/5/merge', BUILD_SOURCEVERSION: MERGE }, none)!.branch).toBeNull();
  });
});
