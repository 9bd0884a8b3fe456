// What `pleat check --upload`, `pleat upload` and the team-rules fetch of `pleat check` share:
// where the server is (config, PLEAT_SERVER_URL / PLEAT_PROJECT), the token (PLEAT_TOKEN only),
// keeping the report on disk, and one clear line per outcome. The token is never printed.
import { mkdirSync, writeFileSync, existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { checkUploadReport } from '../../shared/report/reportSchema';
import { checkRules } from '../../shared/report/rules';
import type { Report, Rules } from '../../shared/types';
import type { PleatConfig } from '../config';
import { CliError } from '../context';
import { fetchTeamRules, policyFromEnv, uploadReport, type Failure, type RetryPolicy, type ServerTarget } from './client';

export type { RetryPolicy, ServerTarget } from './client';

type Env = Record<string, string | undefined>;

export interface ServerSettings {
  url: string | null;
  project: string | null;
  /** From PLEAT_TOKEN; no file is ever read for it. */
  token: string | null;
  policy: RetryPolicy;
}

/** Default place of the JSON report that an upload keeps, relative to the repository root. */
export const KEPT_REPORT = '.pleat/report.json';

/** Server settings from the config and the environment; PLEAT_SERVER_URL and PLEAT_PROJECT win over the config. */
export function serverSettings(config: PleatConfig | null, env: Env = process.env): ServerSettings {
  const problems: string[] = [];
  const envUrl = env.PLEAT_SERVER_URL?.trim() || null;
  if (envUrl !== null) {
    let ok = false;
    try {
      const u = new URL(envUrl);
      ok = u.protocol === 'http:' || u.protocol === 'https:';
    } catch {
      ok = false;
    }
    if (!ok) problems.push('PLEAT_SERVER_URL must be an http:// or https:// URL');
  }
  const envProject = env.PLEAT_PROJECT?.trim() || null;
  if (envProject !== null && !/^[A-Za-z0-9._-]+$/.test(envProject)) problems.push('PLEAT_PROJECT must be a project name of letters, digits, ".", "_" or "-"');
  const token = env.PLEAT_TOKEN?.trim() || null;
  if (token !== null && /\s/.test(token)) problems.push('PLEAT_TOKEN must not contain spaces or line breaks');
  const { policy, problems: policyProblems } = policyFromEnv(env);
  problems.push(...policyProblems);
  if (problems.length > 0) throw new CliError(problems.join('; '));
  return {
    url: envUrl ?? config?.server?.url ?? null,
    project: envProject ?? config?.server?.project ?? null,
    token,
    policy,
  };
}

/** The server to upload to, or a command-line error (exit 2) saying what is missing. */
export function uploadTarget(s: ServerSettings): ServerTarget {
  const missing: string[] = [];
  if (!s.url) missing.push('the server address (server.url in pleat.config.yaml, or PLEAT_SERVER_URL)');
  if (!s.project) missing.push('the project (server.project in pleat.config.yaml, or PLEAT_PROJECT)');
  if (!s.token) missing.push("the project's CI token in the PLEAT_TOKEN environment variable");
  if (missing.length > 0) throw new CliError(`cannot upload without ${missing.join(', ')}`);
  return { url: s.url!, project: s.project!, token: s.token! };
}

/**
 * The team rules when a token is set and the server is known; null otherwise. When they cannot
 * be had, a warning says so and the check goes on with the repository's rules: the exit code is
 * not changed (the server being down must not fail every build), but the log shows the gate ran
 * without the team floor.
 */
export async function loadTeamRules(s: ServerSettings, say: (line: string) => void, version: string): Promise<Rules | null> {
  if (!s.token) return null;
  if (!s.url || !s.project) {
    say(`pleat: warning: PLEAT_TOKEN is set but ${!s.url ? 'no server.url (or PLEAT_SERVER_URL)' : 'no server.project (or PLEAT_PROJECT)'} is given; team rules not fetched, checking with the repository's rules only`);
    return null;
  }
  const target: ServerTarget = { url: s.url, project: s.project, token: s.token };
  // Two tries at most: one blip is forgiven, but a server that is down should not hold up the check.
  const policy = { ...s.policy, tries: Math.min(2, s.policy.tries) };
  const outcome = await fetchTeamRules(target, policy, { userAgent: `pleat/${version}` });
  if (!outcome.ok) {
    say(`pleat: warning: team rules of project ${s.project} not fetched: ${outcome.message.replace(/\.$/, '')}${triesNote(outcome)}; checking with the repository's rules only`);
    return null;
  }
  const raw = (outcome.body as { rules?: unknown } | null)?.rules;
  if (raw === undefined || raw === null || typeof raw !== 'object' || Array.isArray(raw)) {
    say(`pleat: warning: the server's answer for the team rules of ${s.project} has no rules mapping; checking with the repository's rules only`);
    return null;
  }
  const { rules, problems } = checkRules(raw, ['team rules']);
  for (const p of problems) say(`pleat: warning: team rule ignored: ${p.message}`);
  return rules;
}

function triesNote(f: Failure): string {
  return f.tries > 1 ? ` (${f.tries} tries)` : '';
}

/** Writes the JSON report where an upload keeps it (a .gitignore keeps the .pleat folder out of commits). */
export function keepReport(json: string, file: string): void {
  const dir = path.dirname(file);
  mkdirSync(dir, { recursive: true });
  if (path.basename(dir) === '.pleat' && !existsSync(path.join(dir, '.gitignore'))) {
    writeFileSync(path.join(dir, '.gitignore'), '# written by pleat: reports kept for upload, not for commits\n*\n');
  }
  writeFileSync(file, json);
}

/** Branch and commit the server needs, or the reason the upload cannot start (exit 2). */
export function requireGit(git: Report['git']): void {
  const missing: string[] = [];
  if (!git?.branch) missing.push('branch (set PLEAT_BRANCH)');
  if (!git?.commit) missing.push('commit (set PLEAT_COMMIT)');
  if (missing.length > 0) {
    throw new CliError(`cannot upload: no ${missing.join(' and no ')}; neither the CI variables nor git gave one`);
  }
}

/**
 * The server's own check of an upload (shared/report/reportSchema.ts): a report it would refuse with 400
 * is not sent, and the reason names the value. Null when the report can be sent.
 */
export function uploadProblem(report: unknown): string | null {
  const checked = checkUploadReport(report);
  if (checked.ok) return null;
  const more = checked.problems.length > 1 ? ` (and ${checked.problems.length - 1} more)` : '';
  return `the report is not one the server takes: ${checked.message}${more}`;
}

export interface SendOptions {
  say: (line: string) => void;
  quiet?: boolean;
  version: string;
  /** Where the report is kept, as shown to the user (for the retry hint). */
  keptAs: string | null;
}

/** Uploads the report text with retries; prints one line for the result. True when the server has the run. */
export async function sendReport(json: string, target: ServerTarget, policy: RetryPolicy, o: SendOptions): Promise<boolean> {
  const outcome = await uploadReport(target, json, policy, {
    userAgent: `pleat/${o.version}`,
    onRetry: (f, delayMs) => o.say(`pleat: upload try ${f.tries} of ${policy.tries} failed: ${f.message}; trying again in ${delayMs < 1000 ? `${delayMs} ms` : `${(delayMs / 1000).toFixed(1)} s`}`),
  });
  if (outcome.ok) {
    const body = outcome.body as { created?: boolean; run?: { id?: number; branch?: string; commit?: string }; url?: string };
    const run = body.run ?? {};
    const where = `run ${run.id ?? '?'} of ${target.project}, branch ${run.branch ?? '?'}, commit ${(run.commit ?? '?').slice(0, 12)}`;
    const link = body.url ? `: ${body.url}` : '';
    if (!o.quiet) {
      o.say(body.created === false || outcome.status === 200
        ? `pleat: uploaded: this commit was already stored as ${where}; the first upload is kept${link}`
        : `pleat: uploaded: ${where}${link}`);
    }
    return true;
  }
  const why = outcome.retryable ? `after ${outcome.tries} ${outcome.tries === 1 ? 'try' : 'tries'}` : 'not retried';
  o.say(`pleat: upload failed (${why}): ${outcome.message}`);
  if (o.keptAs) o.say(`pleat: the report is kept in ${o.keptAs}; send it later with: pleat upload ${o.keptAs}`);
  return false;
}

export interface AfterCheck {
  report: Report;
  cwd: string;
  /** Repository root (the config's folder, else the working directory): home of .pleat/. */
  root: string;
  /** The --output file when it already holds the JSON report; it is then the kept copy. */
  jsonOutput: string | null;
  target: ServerTarget;
  policy: RetryPolicy;
  say: (line: string) => void;
  quiet: boolean;
  version: string;
}

/** `check --upload`: keep the JSON report on disk, then send it. True when the server has the run. */
/** Largest design file whose text rides along with an upload. */
const SOURCE_MAX_BYTES = 1024 * 1024;

/**
 * Each design's file text travels with the upload as designs[].source (docs/server.md), so that
 * the server can plan a run's design; larger files and files that cannot be read are left out.
 * The report kept on disk stays without them.
 */
export function withSources(report: Report, root: string): Report {
  return {
    ...report,
    designs: report.designs.map((d) => {
      try {
        const abs = path.resolve(root, d.file);
        if (statSync(abs).size > SOURCE_MAX_BYTES) return d;
        return { ...d, source: readFileSync(abs, 'utf8') };
      } catch {
        return d;
      }
    }),
  };
}

export async function uploadAfterCheck(a: AfterCheck): Promise<boolean> {
  let kept: string | null = a.jsonOutput ? path.resolve(a.cwd, a.jsonOutput) : path.join(a.root, KEPT_REPORT);
  if (!a.jsonOutput) {
    const { formatJson } = await import('../format/json');
    try {
      keepReport(formatJson(a.report), kept);
    } catch (e) {
      a.say(`pleat: warning: cannot keep the report in ${shown(a.cwd, kept)}: ${(e as Error).message}`);
      kept = null;
    }
  }
  const body = withSources(a.report, a.root);
  const problem = uploadProblem(body);
  if (problem) {
    a.say(`pleat: upload failed (not sent): ${problem}`);
    if (kept) a.say(`pleat: the report is kept in ${shown(a.cwd, kept)}`);
    return false;
  }
  return sendReport(JSON.stringify(body), a.target, a.policy, { say: a.say, quiet: a.quiet, version: a.version, keptAs: kept ? shown(a.cwd, kept) : null });
}

function shown(cwd: string, file: string): string {
  const rel = path.relative(cwd, file);
  return rel === '' || rel.startsWith('..') ? file : rel.split(path.sep).join('/');
}
