// What a CI vendor's detector reports about the build, and small helpers the detectors share.
// Each vendor lives in its own file; cli/ci/index.ts tries them in order.

/** The build facts a run is filed under on the server. Unknown facts are null. */
export interface BuildContext {
  /** Which CI system (or 'override' / 'git') the facts came from, for messages. */
  vendor: string;
  branch: string | null;
  /** The commit that was checked: the head of a pull request, never the CI's merge preview. */
  commit: string | null;
  /** The branch a pull/merge request targets, when the CI says so. */
  baseBranch: string | null;
  /** The merge-base with the base branch, when the CI gives it (GitLab) or git computes it. */
  baseCommit: string | null;
  /** First line of the commit's message and its author's name, when the CI says them (else git is asked on upload). */
  message: string | null;
  author: string | null;
  /** Things worth telling the user (a fallback that may be wrong, a payload that could not be read). */
  notes: string[];
}

export type Env = Record<string, string | undefined>;

/** How detectors read files (only GitHub's event payload today); tests pass their own. */
export type ReadFile = (file: string) => string | null;

/** A detector answers null when the build does not run on its CI system. */
export type Detector = (env: Env, readFile: ReadFile) => BuildContext | null;

/** A variable's value, trimmed; empty counts as unset (CI systems export empty variables freely). */
export function val(env: Env, name: string): string | null {
  const v = env[name];
  if (v === undefined) return null;
  const t = v.trim();
  return t === '' ? null : t;
}

/** The first set variable among `names`. */
export function firstVal(env: Env, ...names: string[]): string | null {
  for (const n of names) {
    const v = val(env, n);
    if (v !== null) return v;
  }
  return null;
}

/** `refs/heads/feature/x` -> `feature/x`; tags keep their name (`refs/tags/v1` -> `v1`). */
export function shortRef(ref: string | null): string | null {
  if (ref === null) return null;
  return ref.replace(/^refs\/(heads|tags)\//, '') || null;
}

/** A commit id as the server takes it (7 to 64 hex digits, lower case), else null. */
export function hexCommit(value: string | null): string | null {
  if (value === null) return null;
  return /^[0-9a-fA-F]{7,64}$/.test(value) ? value.toLowerCase() : null;
}

export function context(vendor: string, fields: Partial<Omit<BuildContext, 'vendor'>>): BuildContext {
  return {
    vendor,
    branch: fields.branch ?? null,
    commit: fields.commit ?? null,
    baseBranch: fields.baseBranch ?? null,
    baseCommit: fields.baseCommit ?? null,
    message: fields.message ?? null,
    author: fields.author ?? null,
    notes: fields.notes ?? [],
  };
}

/** The first line of a commit message, trimmed and bounded (the report keeps at most 500 characters); null when empty. */
export function firstLine(text: string | null | undefined, max = 500): string | null {
  if (typeof text !== 'string') return null;
  const line = text.split(/\r?\n/, 1)[0].trim();
  if (!line) return null;
  return line.length > max ? `${line.slice(0, max - 3)}...` : line;
}

/** `Name <mail@host>` -> `Name`; bounded to the report's 200 characters. */
export function authorName(text: string | null | undefined): string | null {
  const name = firstLine(typeof text === 'string' ? text.replace(/\s*<[^>]*>\s*$/, '') : null, 200);
  return name;
}
