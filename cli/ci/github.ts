// GitHub Actions. On pull-request events GITHUB_SHA is the merge preview GitHub builds
// (refs/pull/N/merge), or for pull_request_target the base branch's tip: the head commit is read
// from the event payload (GITHUB_EVENT_PATH). GITHUB_HEAD_REF / GITHUB_BASE_REF name the two
// branches; GITHUB_REF_NAME is "N/merge" there and is not a branch.
import { authorName, context, firstLine, firstVal, hexCommit, shortRef, val, type Detector } from './types';

interface Payload {
  pull_request?: { head?: { ref?: unknown; sha?: unknown }; base?: { ref?: unknown } };
  merge_group?: { base_ref?: unknown; head_sha?: unknown };
  /** Push events: the commit that was pushed last. */
  head_commit?: { id?: unknown; message?: unknown; author?: { name?: unknown } };
}

const str = (v: unknown): string | null => (typeof v === 'string' && v.trim() !== '' ? v.trim() : null);

export const github: Detector = (env, readFile) => {
  if (val(env, 'GITHUB_ACTIONS') !== 'true') return null;
  const notes: string[] = [];
  let payload: Payload | null = null;
  const eventPath = val(env, 'GITHUB_EVENT_PATH');
  if (eventPath) {
    const text = readFile(eventPath);
    if (text !== null) {
      try {
        const parsed = JSON.parse(text) as unknown;
        if (parsed && typeof parsed === 'object') payload = parsed as Payload;
      } catch {
        notes.push(`the GitHub event payload ${eventPath} is not JSON; it was ignored`);
      }
    } else {
      notes.push(`the GitHub event payload ${eventPath} could not be read`);
    }
  }

  const pr = payload?.pull_request;
  const headRef = val(env, 'GITHUB_HEAD_REF');
  if (pr || headRef) {
    const headSha = hexCommit(str(pr?.head?.sha));
    if (!headSha) {
      notes.push('pull request without its event payload: GITHUB_SHA is the merge preview, not the head commit; set PLEAT_COMMIT to the head commit');
    }
    return context('GitHub Actions', {
      branch: headRef ?? str(pr?.head?.ref),
      commit: headSha ?? hexCommit(val(env, 'GITHUB_SHA')),
      baseBranch: val(env, 'GITHUB_BASE_REF') ?? str(pr?.base?.ref),
      notes,
    });
  }

  const ref = val(env, 'GITHUB_REF');
  if (ref?.startsWith('refs/pull/')) {
    // A pull-request ref without the payload: there is no branch name to take.
    notes.push(`GITHUB_REF is ${ref}, not a branch; set PLEAT_BRANCH`);
    return context('GitHub Actions', { commit: hexCommit(val(env, 'GITHUB_SHA')), notes });
  }
  // A push payload names the pushed commit's message and author; only when it is this commit.
  const commit = hexCommit(val(env, 'GITHUB_SHA'));
  const head = payload?.head_commit;
  const own = !!head && commit !== null && str(head.id)?.toLowerCase() === commit;
  return context('GitHub Actions', {
    branch: firstVal(env, 'GITHUB_REF_NAME') ?? shortRef(ref),
    commit,
    message: own ? firstLine(str(head?.message)) : null,
    author: own ? authorName(str(head?.author?.name)) : null,
    // A merge queue builds a temporary branch for its base branch.
    baseBranch: shortRef(str(payload?.merge_group?.base_ref)),
    notes,
  });
};
