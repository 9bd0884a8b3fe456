// Variable names and their meaning: GitHub Actions documentation, "Variables" (default
// environment variables) and "Events that trigger workflows" (pull_request: GITHUB_SHA is the
// last merge commit of refs/pull/N/merge). Recalled from memory, not copied from a live runner.
import { describe, expect, it } from 'vitest';
import { github } from './github';

const HEAD = 'a'.repeat(40);
const MERGE = 'b'.repeat(40);
const files = (map: Record<string, string>) => (f: string) => map[f] ?? null;

describe('GitHub Actions', () => {
  it('is not detected outside GitHub Actions', () => {
    expect(github({ GITHUB_SHA: MERGE, GITHUB_REF_NAME: 'main' }, files({}))).toBeNull();
  });

  it('takes the branch and commit of a push', () => {
    const c = github({ GITHUB_ACTIONS: 'true', GITHUB_REF: 'refs/heads/feature/fir', GITHUB_REF_NAME: 'feature/fir', GITHUB_SHA: HEAD }, files({}));
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: null });
  });

  it('takes the head commit from the event payload of a pull request, not the merge preview in GITHUB_SHA', () => {
    const payload = JSON.stringify({ pull_request: { head: { ref: 'feature/fir', sha: HEAD }, base: { ref: 'main' } } });
    const c = github(
      { GITHUB_ACTIONS: 'true', GITHUB_EVENT_NAME: 'pull_request', GITHUB_HEAD_REF: 'feature/fir', GITHUB_BASE_REF: 'main', GITHUB_REF: 'refs/pull/7/merge', GITHUB_REF_NAME: '7/merge', GITHUB_SHA: MERGE, GITHUB_EVENT_PATH: '/ev.json' },
      files({ '/ev.json': payload }),
    );
    expect(c).toMatchObject({ branch: 'feature/fir', commit: HEAD, baseBranch: 'main' });
    expect(c!.notes).toEqual([]);
  });

  it('falls back to GITHUB_SHA with a note when the payload is missing', () => {
    const c = github({ GITHUB_ACTIONS: 'true', GITHUB_HEAD_REF: 'feature/fir', GITHUB_BASE_REF: 'main', GITHUB_SHA: MERGE, GITHUB_EVENT_PATH: '/gone.json' }, files({}));
    expect(c).toMatchObject({ branch: 'feature/fir', commit: MERGE, baseBranch: 'main' });
    expect(c!.notes.join(' ')).toMatch(/merge preview/);
  });

  it('reads a pull-request payload also for review events, where GITHUB_HEAD_REF is not set', () => {
    const payload = JSON.stringify({ pull_request: { head: { ref: 'fix/taps', sha: HEAD }, base: { ref: 'develop' } } });
    const c = github({ GITHUB_ACTIONS: 'true', GITHUB_EVENT_NAME: 'pull_request_review', GITHUB_REF: 'refs/pull/9/merge', GITHUB_SHA: MERGE, GITHUB_EVENT_PATH: '/ev.json' }, files({ '/ev.json': payload }));
    expect(c).toMatchObject({ branch: 'fix/taps', commit: HEAD, baseBranch: 'develop' });
  });

  it('never takes "N/merge" for a branch', () => {
    const c = github({ GITHUB_ACTIONS: 'true', GITHUB_REF: 'refs/pull/9/merge', GITHUB_REF_NAME: '9/merge', GITHUB_SHA: MERGE }, files({}));
    expect(c!.branch).toBeNull();
    expect(c!.notes.join(' ')).toMatch(/PLEAT_BRANCH/);
  });

  it('ignores a payload that is not JSON, with a note', () => {
    const c = github({ GITHUB_ACTIONS: 'true', GITHUB_REF_NAME: 'main', GITHUB_SHA: HEAD, GITHUB_EVENT_PATH: '/ev.json' }, files({ '/ev.json': '{not json' }));
    expect(c).toMatchObject({ branch: 'main', commit: HEAD });
    expect(c!.notes.join(' ')).toMatch(/not JSON/);
  });

  it('takes message and author of a push from the payload, only when it is the pushed commit', () => {
    // push payload: head_commit { id, message, author { name, email } } (GitHub webhook docs, from memory).
    const payload = JSON.stringify({ head_commit: { id: HEAD, message: 'Retime the equaliser loop\n\nLonger text.', author: { name: 'Ada Field', email: 'a@example.test' } } });
    const env = { GITHUB_ACTIONS: 'true', GITHUB_REF: 'refs/heads/main', GITHUB_REF_NAME: 'main', GITHUB_SHA: HEAD, GITHUB_EVENT_PATH: '/ev.json' };
    expect(github(env, files({ '/ev.json': payload }))).toMatchObject({ message: 'Retime the equaliser loop', author: 'Ada Field' });
    expect(github({ ...env, GITHUB_SHA: MERGE }, files({ '/ev.json': payload }))).toMatchObject({ message: null, author: null });
  });
});
