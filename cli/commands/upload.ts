// `pleat upload REPORT.json`: sends a JSON report that `pleat check` wrote to the Pleat server,
// for CI jobs that check in one step and upload in another, or to retry a failed upload.
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { detectBuild } from '../ci/index';
import { findConfig, loadConfig, type PleatConfig } from '../config';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { diagnosticLine } from '../format/common';
import { requireGit, sendReport, serverSettings, uploadProblem, uploadTarget, withSources } from '../upload/index';
import { attachHardware, collect, readHardwareSummaries } from '../upload/hardware';
import type { Report } from '../../shared/types';

interface UploadOptions {
  config?: string;
  quiet?: boolean;
  hardwareSummary?: string[];
}

/** The server refuses more than this by default (PLEAT_MAX_REPORT_MB); reading a far bigger file is pointless. */
const MAX_READ_BYTES = 512 * 1024 * 1024;

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('upload')
    .description('send a JSON report written by `pleat check --format json` to the Pleat server (token in PLEAT_TOKEN)')
    .argument('<report>', 'the JSON report file')
    .option('-c, --config <file>', 'read server.url and server.project from this config instead of pleat.config.yaml')
    .option('-q, --quiet', 'print only failures')
    .option('--hardware-summary <file>', 'attach this <top>.hardware.json of `pleat rtl --area` to its design (repeatable)', collect)
    .action(async (file: string, opts: UploadOptions) => {
      process.exitCode = await runUpload(file, opts, ctx);
    });
};

export async function runUpload(file: string, opts: UploadOptions, ctx: CliContext): Promise<number> {
  const cwd = process.cwd();
  const say = (line: string) => process.stderr.write(`${line}\n`);

  const summaryFiles = opts.hardwareSummary ?? [];
  const summaries = summaryFiles.length ? readHardwareSummaries(summaryFiles, cwd) : [];
  const config = await readConfig(cwd, opts.config, say);
  const server = serverSettings(config);
  const target = uploadTarget(server);

  const abs = path.resolve(cwd, file);
  let text: string;
  try {
    if (statSync(abs).size > MAX_READ_BYTES) throw new CliError(`${file} is larger than ${MAX_READ_BYTES / (1024 * 1024)} MiB; that is not a report the server takes`);
    text = readFileSync(abs, 'utf8');
  } catch (e) {
    if (e instanceof CliError) throw e;
    throw new CliError(`cannot read the report ${file}: ${(e as Error).message}`);
  }
  let report: Report;
  try {
    report = JSON.parse(text) as Report;
  } catch (e) {
    throw new CliError(`${file} is not JSON: ${(e as Error).message}`);
  }
  if (!report || typeof report !== 'object' || Array.isArray(report) || (report as { format?: unknown }).format !== 'pleat-report/1') {
    throw new CliError(`${file} is not a pleat report (format pleat-report/1); write one with pleat check --format json --output ${file}`);
  }

  // The report's own git facts win (they describe what was checked); gaps are filled from the
  // environment as `check --upload` would, and the merge-base is computed for the report's commit.
  const given = (report.git && typeof report.git === 'object' ? report.git : {}) as Partial<Report['git']>;
  const needsLookup = !given.branch || !given.commit || !given.baseCommit || !given.message || !given.author;
  if (needsLookup) {
    const build = detectBuild({ cwd, git: 'process', mergeBase: true, known: given });
    if (build.problems.length > 0) throw new CliError(build.problems.join('; '));
    const c = build.context;
    report.git = {
      ...given,
      branch: c.branch,
      commit: c.commit,
      ...(c.baseBranch ? { baseBranch: c.baseBranch } : {}),
      ...(c.baseCommit ? { baseCommit: c.baseCommit } : {}),
      ...(c.message ? { message: c.message } : {}),
      ...(c.author ? { author: c.author } : {}),
    };
    if (!opts.quiet) for (const n of c.notes) say(`pleat: note: ${n}`);
  }
  requireGit(report.git);
  if (summaries.length) report = attachHardware(report, summaries, summaryFiles);
  const problem = uploadProblem(report);
  if (problem) throw new CliError(`${file}: ${problem}; nothing was uploaded`);

  // The design files ride along as check --upload sends them (so the web can plan a run's design),
  // read from where check found them: report paths are relative to the config's folder, else cwd.
  const root = config ? config.dir : cwd;
  const body = withSources(report, root);
  const attached = summaries.length > 0 || body.designs.some((d, i) => d !== report.designs[i]);
  const ok = await sendReport(attached || needsLookup ? JSON.stringify(body) : text, target, server.policy, {
    say,
    quiet: !!opts.quiet,
    version: ctx.version,
    keptAs: null,
  });
  return ok ? 0 : 3;
}

async function readConfig(cwd: string, given: string | undefined, say: (line: string) => void): Promise<PleatConfig | null> {
  const configFile = given ? path.resolve(cwd, given) : findConfig(cwd);
  if (!configFile) return null;
  const shown = path.relative(cwd, configFile) || path.basename(configFile);
  let isFile = false;
  try {
    isFile = statSync(configFile).isFile();
  } catch {
    isFile = false;
  }
  if (!isFile) throw new CliError(`config file not found: ${given ?? shown}`);
  const { config, diagnostics } = await loadConfig(configFile);
  for (const d of diagnostics) say(diagnosticLine(shown, d));
  if (!config) throw new CliError(`the config file ${shown} is invalid; nothing was uploaded`);
  return config;
}
