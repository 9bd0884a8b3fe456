// `pleat diff BASE.json NEW.json` and `pleat diff --against <branch> [NEW.json]`: what moved in
// the folding plans between two reports (shared/report/diff.ts), for a local look before pushing.
// --against takes the base from the server: the latest run of that branch.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { findConfig, loadConfig, type PleatConfig } from '../config';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { formatDiffText } from '../format/diff';
import { getJson, login, type ServerTarget } from '../upload/client';
import { serverSettings } from '../upload/index';
import { diffReports } from '../../shared/report/diff';
import type { Report } from '../../shared/types';
import { checkToReport } from './check';

interface DiffOptions {
  against?: string;
  config?: string;
  format: 'text' | 'json';
  color: boolean;
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('diff')
    .description('compare two JSON reports in folding terms (factor, units, registers, utilization, negative edges, loops), or a report with the latest run of a branch on the server')
    .argument('[reports...]', 'BASE.json NEW.json; with --against only NEW.json (default: check the designs now)')
    .option('--against <branch>', "take the base from the server: the latest run of this branch (a member's login in PLEAT_EMAIL and PLEAT_PASSWORD)")
    .option('-c, --config <file>', 'use this config file instead of looking for pleat.config.yaml')
    .addOption(new Option('-f, --format <format>', 'output format').choices(['text', 'json']).default('text'))
    .option('--no-color', 'never colour the output')
    .action(async (reports: string[], opts: DiffOptions) => {
      process.exitCode = await runDiff(reports, opts, ctx);
    });
};

function readReport(file: string, cwd: string): Report {
  let text: string;
  try {
    text = readFileSync(path.resolve(cwd, file), 'utf8');
  } catch (e) {
    throw new CliError(`cannot read the report ${file}: ${(e as Error).message}`);
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    throw new CliError(`${file} is not JSON: ${(e as Error).message}`);
  }
  return asReport(value, file);
}

function asReport(value: unknown, what: string): Report {
  const r = value as Report | null;
  if (!r || typeof r !== 'object' || r.format !== 'pleat-report/1' || !Array.isArray(r.designs)) {
    throw new CliError(`${what} is not a pleat report (format pleat-report/1); \`pleat check --format json --output FILE\` writes one`);
  }
  return r;
}

async function runDiff(reports: string[], opts: DiffOptions, ctx: CliContext): Promise<number> {
  const cwd = process.cwd();
  let base: Report;
  let now: Report;
  let names: { base: string; now: string };
  if (opts.against) {
    if (reports.length > 1) throw new CliError('with --against give at most one report (NEW.json); the base comes from the server');
    base = await latestRunReport(opts.against, opts, cwd);
    if (reports.length === 1) {
      now = readReport(reports[0], cwd);
      names = { base: `the latest run of ${opts.against}`, now: reports[0] };
    } else {
      now = (await checkToReport([], { config: opts.config, quiet: true, color: opts.color }, ctx)).report;
      names = { base: `the latest run of ${opts.against}`, now: 'the designs as they are now' };
    }
  } else {
    if (reports.length !== 2) throw new CliError('pleat diff needs two reports, BASE.json NEW.json (or --against <branch>)');
    base = readReport(reports[0], cwd);
    now = readReport(reports[1], cwd);
    names = { base: reports[0], now: reports[1] };
  }
  const diff = diffReports(base, now);
  if (opts.format === 'json') process.stdout.write(`${JSON.stringify({ format: 'pleat-diff/1', base: names.base, now: names.now, ...diff }, null, 2)}\n`);
  else process.stdout.write(formatDiffText(diff, makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env })), names));
  return 0;
}

/**
 * The report of the latest run of a branch: GET /api/projects/:slug/branches/:branch/runs?limit=1,
 * then GET /api/runs/:id, which holds the stored report. Reading runs is for members (a CI token
 * only uploads): the login comes from PLEAT_EMAIL and PLEAT_PASSWORD.
 */
async function latestRunReport(branch: string, opts: DiffOptions, cwd: string): Promise<Report> {
  let config: PleatConfig | null = null;
  const file = opts.config ? path.resolve(cwd, opts.config) : findConfig(cwd);
  if (file) {
    const loaded = await loadConfig(file);
    if (!loaded.config) throw new CliError(`the config file ${path.relative(cwd, file) || file} is invalid`);
    config = loaded.config;
  }
  const s = serverSettings(config);
  if (!s.url || !s.project) throw new CliError('--against needs the server address and project (server.url and server.project in pleat.config.yaml, or PLEAT_SERVER_URL and PLEAT_PROJECT)');
  const email = process.env.PLEAT_EMAIL?.trim();
  const password = process.env.PLEAT_PASSWORD;
  if (!email || !password) throw new CliError("--against reads runs as a member of the project: set PLEAT_EMAIL and PLEAT_PASSWORD (a CI token may only upload)");
  const policy = { ...s.policy, tries: Math.min(s.policy.tries, 2) };
  const session = await login(s.url, email, password, policy);
  if ('ok' in session) throw new CliError(`cannot sign in to ${s.url}: ${session.message}`);
  const target: ServerTarget = { url: s.url, project: s.project, token: '', cookie: session.cookie };
  const list = await getJson(target, `api/projects/${encodeURIComponent(s.project)}/branches/${encodeURIComponent(branch)}/runs?limit=1`, policy);
  if (!list.ok) throw new CliError(`cannot read the runs of branch ${branch}: ${list.message}`);
  const run = (list.body as { runs?: { id?: number }[] }).runs?.[0];
  if (!run || typeof run.id !== 'number') throw new CliError(`branch ${branch} of project ${s.project} has no runs on the server`);
  const got = await getJson(target, `api/runs/${run.id}`, policy);
  if (!got.ok) throw new CliError(`cannot read run ${run.id}: ${got.message}`);
  return asReport((got.body as { report?: unknown }).report, `run ${run.id} of branch ${branch}`);
}
