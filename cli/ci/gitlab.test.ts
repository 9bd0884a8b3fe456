// Variable names and their meaning: GitLab documentation, "Predefined CI/CD variables reference"
// (merge request pipelines; merged results pipelines set CI_MERGE_REQUEST_SOURCE_BRANCH_SHA).
// Recalled from memory.
import { describe, expect, it } from 'vitest';
import { gitlab } from './gitlab';

const HEAD = '1'.repeat(40);
const MERGE = '2'.repeat(40);
const BASE = '3'.repeat(40);
const none = () => null;

describe('GitLab CI', () => {
  it('is not detected without GITLAB_CI', () => {
    expect(gitlab({ CI_COMMIT_SHA: HEAD, CI_COMMIT_REF_NAME: 'main' }, none)).toBeNull();
  });

  it('takes a branch pipeline as it is', () => {
    expect(gitlab({ GITLAB_CI: 'true', CI_COMMIT_BRANCH: 'main', CI_COMMIT_REF_NAME: 'main', CI_COMMIT_SHA: HEAD }, none)).toMatchObject({
      branch: 'main', commit: HEAD, baseBranch: null, baseCommit: null,
    });
  });

  it('uses the source and target branches and the diff base of a merge request pipeline', () => {
    const c = gitlab({
      GITLAB_CI: 'true', CI_COMMIT_REF_NAME: 'feature/eq', CI_COMMIT_SHA: HEAD,
      CI_MERGE_REQUEST_SOURCE_BRANCH_NAME: 'feature/eq', CI_MERGE_REQUEST_TARGET_BRANCH_NAME: 'main', CI_MERGE_REQUEST_DIFF_BASE_SHA: BASE,
    }, none);
    expect(c).toMatchObject({ branch: 'feature/eq', commit: HEAD, baseBranch: 'main', baseCommit: BASE });
  });

  it('takes the source head, not the merge preview, in a merged results pipeline', () => {
    const c = gitlab({
      GITLAB_CI: 'true', CI_COMMIT_SHA: MERGE, CI_MERGE_REQUEST_SOURCE_BRANCH_SHA: HEAD,
      CI_MERGE_REQUEST_SOURCE_BRANCH_NAME: 'feature/eq', CI_MERGE_REQUEST_TARGET_BRANCH_NAME: 'main',
    }, none);
    expect(c).toMatchObject({ branch: 'feature/eq', commit: HEAD, baseBranch: 'main' });
  });

  it('treats an empty source-branch SHA (plain merge request pipeline) as unset', () => {
    const c = gitlab({ GITLAB_CI: 'true', CI_COMMIT_SHA: HEAD, CI_MERGE_REQUEST_SOURCE_BRANCH_SHA: '', CI_MERGE_REQUEST_SOURCE_BRANCH_NAME: 'x' }, none);
    expect(c!.commit).toBe(HEAD);
  });

  it('takes CI_COMMIT_TITLE and the name of CI_COMMIT_AUTHOR, not those of a merged-results commit', () => {
    const env = { GITLAB_CI: 'true', CI_COMMIT_BRANCH: 'main', CI_COMMIT_SHA: HEAD, CI_COMMIT_TITLE: 'Fold the tap bank at N=4', CI_COMMIT_AUTHOR: 'Ada Field <a@example.test>' };
    expect(gitlab(env, none)).toMatchObject({ message: 'Fold the tap bank at N=4', author: 'Ada Field' });
    const merged = gitlab({ ...env, CI_COMMIT_SHA: MERGE, CI_MERGE_REQUEST_SOURCE_BRANCH_NAME: 'f', CI_MERGE_REQUEST_SOURCE_BRANCH_SHA: HEAD }, none);
    expect(merged).toMatchObject({ commit: HEAD, message: null, author: null });
  });
});
