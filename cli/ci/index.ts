// The build context of a report (branch, commit, base branch, merge-base): PLEAT_* overrides
// first, then the CI system's variables (one file per vendor), then git. Uploads ask git itself
// and compute the merge-base; a plain check reads the .git folder and starts no process.
import { readFileSync, statSync } from 'node:fs';
import { gitInfo } from '../git';
import { azure } from './azure';
import { bitbucket } from './bitbucket';
import { buildkite } from './buildkite';
import { circleci } from './circleci';
import { commitFacts, gitHead, mergeBase, remoteDefaultBranch, runGit, type GitRunner } from './git';
import { github } from './github';
import { gitlab } from './gitlab';
import { jenkins } from './jenkins';
import { readOverride } from './override';
import { travis } from './travis';
import { context, type BuildContext, type Detector, type Env, type ReadFile } from './types';

export type { BuildContext } from './types';

/** Every CI system pleat recognises, in the order they are tried (each checks its own marker variable). */
export const DETECTORS: readonly Detector[] = [github, gitlab, buildkite, circleci, azure, bitbucket, jenkins, travis];

/** Event payloads are a few kilobytes; a bigger file is not one. */
const MAX_PAYLOAD_BYTES = 16 * 1024 * 1024;

export const readFileOrNull: ReadFile = (file) => {
  try {
    if (statSync(file).size > MAX_PAYLOAD_BYTES) return null;
    return readFileSync(file, 'utf8');
  } catch {
    return null;
  }
};

/** The CI system's facts, or null when no known CI system is running the build. */
export function detectCi(env: Env, readFile: ReadFile = readFileOrNull): BuildContext | null {
  for (const d of DETECTORS) {
    const found = d(env, readFile);
    if (found) return found;
  }
  return null;
}

export interface DetectOptions {
  cwd: string;
  env?: Env;
  /** 'process' runs git (uploads); 'files' reads the .git folder only (a plain check, fast). */
  git?: 'process' | 'files';
  /** Compute the merge-base with the base branch (needs git history; uploads only). */
  mergeBase?: boolean;
  readFile?: ReadFile;
  runner?: GitRunner;
  /** Facts already known (a report's own git object): they win over everything else. */
  known?: { branch?: string | null; commit?: string | null; baseBranch?: string | null; baseCommit?: string | null; message?: string | null; author?: string | null };
}

export interface Detected {
  context: BuildContext;
  /** PLEAT_* values that cannot be right: a command-line problem (exit 2). */
  problems: string[];
}

export function detectBuild(opts: DetectOptions): Detected {
  const env = opts.env ?? process.env;
  const runner = opts.runner ?? runGit;
  const over = readOverride(env);
  const ci = detectCi(env, opts.readFile ?? readFileOrNull);
  const ctx: BuildContext = ci ?? context('local', {});
  // A hand-set branch or commit replaces the CI's, and with it the CI's notes about them.
  const notes = over.commit || over.branch ? [] : [...ctx.notes];
  const k = opts.known ?? {};
  ctx.branch = k.branch || over.branch || ctx.branch;
  ctx.commit = k.commit || over.commit || ctx.commit;
  ctx.baseBranch = k.baseBranch || over.baseBranch || ctx.baseBranch;
  ctx.baseCommit = k.baseCommit || over.baseCommit || ctx.baseCommit;
  // A hand-set commit is not the one the CI's message describes.
  if (over.commit && !k.commit) {
    ctx.message = null;
    ctx.author = null;
  }
  ctx.message = k.message || ctx.message;
  ctx.author = k.author || ctx.author;

  if (ctx.branch === null || ctx.commit === null) {
    if (opts.git === 'process') {
      const local = gitHead(opts.cwd, runner);
      // Git's branch only goes with git's commit: a CI commit on a different local branch would mix two builds.
      if (ctx.commit === null || ctx.commit === local.commit) ctx.branch = ctx.branch ?? local.branch;
      ctx.commit = ctx.commit ?? local.commit;
      if (ctx.branch === null) notes.push(...local.notes);
    } else {
      const local = gitInfo(opts.cwd);
      if (ctx.commit === null || ctx.commit === local.commit) ctx.branch = ctx.branch ?? local.branch;
      ctx.commit = ctx.commit ?? local.commit;
    }
  }

  // Message and author for uploads: from git when the CI did not say them.
  if (opts.git === 'process' && ctx.commit !== null && (ctx.message === null || ctx.author === null)) {
    const facts = commitFacts(opts.cwd, ctx.commit, runner);
    ctx.message = ctx.message ?? facts.message;
    ctx.author = ctx.author ?? facts.author;
  }

  if (opts.mergeBase && ctx.baseCommit === null && ctx.commit !== null) {
    const base = ctx.baseBranch ?? remoteDefaultBranch(opts.cwd, runner);
    if (base !== null && base !== ctx.branch) {
      ctx.baseCommit = mergeBase(opts.cwd, ctx.commit, base, runner);
      if (ctx.baseCommit === null && ctx.baseBranch !== null) {
        notes.push(`no merge-base with ${ctx.baseBranch} (a shallow clone, or the branch was not fetched); the server compares with that branch's latest earlier run`);
      }
    }
  }
  ctx.notes = notes;
  return { context: ctx, problems: over.problems };
}

/** The `git` object of a report from a build context; base fields only when known. */
export function reportGit(ctx: BuildContext): { branch: string | null; commit: string | null; baseBranch?: string; baseCommit?: string; message?: string; author?: string } {
  const git: { branch: string | null; commit: string | null; baseBranch?: string; baseCommit?: string; message?: string; author?: string } = { branch: ctx.branch, commit: ctx.commit };
  if (ctx.baseBranch) git.baseBranch = ctx.baseBranch;
  if (ctx.baseCommit) git.baseCommit = ctx.baseCommit;
  if (ctx.message) git.message = ctx.message;
  if (ctx.author) git.author = ctx.author;
  return git;
}
