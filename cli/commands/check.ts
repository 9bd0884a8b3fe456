// `pleat check [paths...]`: validates and analyses designs, applies the rules in force, prints
// what to act on and writes the report in the chosen format.
import { mkdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import path from 'node:path';
import { Option, type Command } from 'commander';
import { colorLevel, makeChalk } from '../color';
import { findConfig, loadConfig, type PleatConfig } from '../config';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { expandGlobs, expandPaths, reportPath, type Unreadable } from '../files';
import { decodeDesignBytes, formatBytes } from '../../shared/design/encoding';
import { diagnosticLine, type FormatContext, type Formatter } from '../format/common';
import { formatText } from '../format/text';
import { gitRoot } from '../git';
import { detectBuild, reportGit } from '../ci/index';
import { loadTeamRules, requireGit, serverSettings, uploadAfterCheck, uploadTarget } from '../upload/index';
import { attachHardware, collect, readHardwareSummaries } from '../upload/hardware';
import { mergeRules } from '../../shared/report/rules';
import { buildReport, designReport, exitCodeOf } from '../../shared/report/report';
import type { Diagnostic, DesignReport, EffectiveRules, Report } from '../../shared/types';
import type { DesignRun } from '../../shared/pipeline';

export type ReportFormat = 'text' | 'json' | 'junit' | 'github' | 'markdown' | 'sarif' | 'gitlab';
const FORMATS: ReportFormat[] = ['text', 'json', 'junit', 'github', 'markdown', 'sarif', 'gitlab'];

export interface CheckOptions {
  format: ReportFormat;
  output?: string;
  config?: string;
  quiet?: boolean;
  color: boolean;
  upload?: boolean;
  /** A pleat-baseline/1 file: only broken rules that are new or worse fail. */
  baseline?: string;
  /** `<top>.hardware.json` files of `pleat rtl --area` to attach to the upload (docs/cli.md). */
  hardwareSummary?: string[];
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('check')
    .description('validate and analyse designs and apply the rules (files, folders, globs; default: the designs of pleat.config.yaml)')
    .argument('[paths...]', 'design files, folders (searched for *.fold.yaml and *.fold.json) or globs')
    .addOption(new Option('-f, --format <format>', 'report format').choices(FORMATS).default('text'))
    .option('-o, --output <file>', 'write the report to FILE in the chosen format; the text summary stays on the terminal')
    .option('-c, --config <file>', 'use this config file instead of looking for pleat.config.yaml')
    .option('-q, --quiet', 'print only failures and errors')
    .option('--no-color', 'never colour the output')
    .option('--baseline <file>', 'fail only on broken rules that are new or worse than in this baseline file (written by `pleat baseline`)')
    .option('--upload', 'send the report to the Pleat server (token in PLEAT_TOKEN); exit 3 when that fails after retries')
    .option('--hardware-summary <file>', 'with --upload: attach this <top>.hardware.json of `pleat rtl --area` to its design (repeatable)', collect)
    .action(async (paths: string[], opts: CheckOptions) => {
      process.exitCode = await runCheck(paths, opts, ctx);
    });
};

interface Checked {
  abs: string;
  file: string;
  /** The engine's report of the design; null when the file could not be read. */
  report: DesignReport | null;
  /** Why the file could not be checked (too large, unreadable). */
  diagnostics?: Diagnostic[];
  ms: number;
  /** Size of the file checked; absent when it was not read. */
  bytes?: number;
}

export async function checkToReport(paths: string[], opts: Pick<CheckOptions, 'config' | 'quiet' | 'color' | 'upload'>, ctx: CliContext): Promise<CheckRun> {
  const cwd = process.cwd();
  const startedAt = new Date().toISOString();
  // PLEAT_TIMING=1 prints where the time goes (a profiling aid, on standard error).
  const timing = process.env.PLEAT_TIMING ? new Timer() : null;
  const err = (s: string) => process.stderr.write(s);
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));

  // Config: given, or found by walking up from the working directory.
  let config: PleatConfig | null = null;
  const configFile = opts.config ? path.resolve(cwd, opts.config) : findConfig(cwd);
  if (opts.config) {
    let isFile = false;
    try {
      isFile = statSync(configFile!).isFile();
    } catch {
      isFile = false;
    }
    if (!isFile) throw new CliError(`config file not found: ${opts.config}`);
  }
  if (configFile) {
    const shown = path.relative(cwd, configFile) || path.basename(configFile);
    const { config: c, diagnostics } = await loadConfig(configFile);
    for (const d of diagnostics) {
      const line = diagnosticLine(shown, d);
      err(`${d.severity === 'error' ? errColor.red(line) : errColor.yellow(line)}\n`);
    }
    if (!c) throw new CliError(`the config file ${shown} is invalid; nothing was checked`);
    config = c;
  }

  // Build facts (branch, commit; for an upload also the merge-base), then the team rules from
  // the server when PLEAT_TOKEN is set: they are a floor under the repository's rules.
  const server = serverSettings(config);
  const target = opts.upload ? uploadTarget(server) : null;
  const build = detectBuild({ cwd, git: target ? 'process' : 'files', mergeBase: !!target });
  if (build.problems.length > 0) throw new CliError(build.problems.join('; '));
  const git = reportGit(build.context);
  if (target) {
    requireGit(git);
    if (!opts.quiet) for (const n of build.context.notes) err(`pleat: note: ${n}\n`);
  }
  const team = await loadTeamRules(server, (line) => err(errColor.yellow(`${line}\n`)), ctx.version);
  const { effective, notes } = mergeRules(team, config?.rules ?? null);
  if (!opts.quiet) for (const n of notes) err(errColor.yellow(`pleat: ${n.message}\n`));

  // Which files.
  let files: string[];
  let unreadable: Unreadable[] = [];
  if (paths.length > 0) {
    const { files: found, problems, unreadable: bad } = await expandPaths(paths, cwd);
    if (problems.length > 0) throw new CliError(problems.join('; '));
    files = found;
    unreadable = bad;
  } else if (config?.designs) {
    ({ files, unreadable } = await expandGlobs(config.designs, config.dir));
    if (files.length === 0 && unreadable.length === 0) {
      throw new CliError(`no design files match the designs of ${path.relative(cwd, config.file) || config.file} (${config.designs.join(', ')})`);
    }
  } else if (config) {
    throw new CliError(`nothing to check: give design paths, or list designs globs in ${path.relative(cwd, config.file) || config.file}`);
  } else {
    throw new CliError('nothing to check: give design files or folders, or run `pleat init` to write a pleat.config.yaml with designs globs');
  }

  // Report paths are relative to the repository root (the config's folder), else the working directory.
  const root = config ? config.dir : cwd;
  const checked: Checked[] = [];
  timing?.lap('config and files');
  const engine = await loadEngine();
  timing?.lap('engine loaded');
  for (const abs of files) {
    const one = checkOne(abs, reportPath(abs, root), effective, engine, timing);
    checked.push(one);
    // The design, its analysis and datapath die here; only the report goes on to the writers.
    if ((one.bytes ?? 0) >= COLLECT_FROM_BYTES) collectGarbage();
  }
  // What the walk could not read is an error of its own, never a silent pass (docs/cli.md).
  for (const u of unreadable) {
    checked.push({
      abs: u.abs,
      file: reportPath(u.abs, root),
      report: null,
      diagnostics: [{ severity: 'error', code: 'file-unreadable', message: u.message, line: null, column: null }],
      ms: 0,
    });
  }
  markDuplicateNames(checked, engine.locate);

  const designs = checked.map((c) => c.report ?? designReport({ file: c.file, name: null, diagnostics: c.diagnostics ?? [], analysis: null }));
  const report = buildReport({ version: ctx.version, git, rules: effective, designs });
  timing?.lap('report assembled');

  const timings = new Map(checked.map((c) => [c.file, c.ms]));
  const wtRoot = gitRoot(cwd);
  const fctx: FormatContext = {
    quiet: !!opts.quiet,
    timings,
    startedAt,
    displayFile: (f) => {
      const rel = path.relative(cwd, path.resolve(root, f));
      return rel === '' ? f : rel.split(path.sep).join('/');
    },
    annotationFile: (f) => (wtRoot ? path.relative(wtRoot, path.resolve(root, f)).split(path.sep).join('/') : f),
    repositoryFile: (f) => {
      if (!wtRoot) return f.startsWith('../') || path.isAbsolute(f) ? null : f;
      const rel = path.relative(wtRoot, path.resolve(root, f));
      return rel.startsWith('..') || path.isAbsolute(rel) ? null : rel.split(path.sep).join('/');
    },
    absoluteFile: (f) => path.resolve(root, f),
  };

  return { report, fctx, cwd, root, target, server, timing };
}

/** What a check found, before any output: the report and how its paths are shown. */
export interface CheckRun {
  report: Report;
  fctx: FormatContext;
  cwd: string;
  root: string;
  target: ReturnType<typeof uploadTarget> | null;
  server: ReturnType<typeof serverSettings>;
  timing: Timer | null;
}

export async function runCheck(paths: string[], opts: CheckOptions, ctx: CliContext): Promise<number> {
  const summaryFiles = opts.hardwareSummary ?? [];
  if (summaryFiles.length && !opts.upload) throw new CliError('--hardware-summary goes with --upload: it attaches the summary to the uploaded report');
  // Read before the check, so a bad summary stops the command before any work (exit 2).
  const summaries = summaryFiles.length ? readHardwareSummaries(summaryFiles, process.cwd()) : [];
  const run = await checkToReport(paths, opts, ctx);
  const { report, fctx, cwd, root, target, server, timing } = run;
  const err = (s: string) => process.stderr.write(s);
  const color = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stdout.isTTY, env: process.env }));
  const errColor = makeChalk(colorLevel({ flag: opts.color, isTTY: !!process.stderr.isTTY, env: process.env }));

  // A baseline: only broken rules that are new or worse fail the check.
  let baselineCode: number | null = null;
  if (opts.baseline) {
    const { readBaseline } = await import('../baseline');
    const baseline = readBaseline(path.resolve(cwd, opts.baseline), opts.baseline);
    const b = await import('../../shared/report/baseline');
    const outcome = b.compareWithBaseline(report, baseline);
    baselineCode = b.exitCodeWithBaseline(report, outcome);
    fctx.baseline = { file: opts.baseline, outcome };
    if (!opts.quiet) for (const g of outcome.gone) err(errColor.dim(`pleat: note: baseline entry no longer found: ${g.design} ${g.rule}${g.subject ? ` ${g.subject}` : ''} (fixed? \`pleat baseline\` writes the file anew)\n`));
  }

  const format = opts.format;
  if (opts.output) {
    const out = path.resolve(cwd, opts.output);
    try {
      mkdirSync(path.dirname(out), { recursive: true });
      // JSON goes out as a stream of chunks: no single string as long as the report.
      if (format === 'json') (await import('../format/json')).writeJsonFile(report, out);
      else writeFileSync(out, (await formatterFor(format))(report, { ...fctx, color: undefined }));
    } catch (e) {
      throw new CliError(`cannot write the report to ${opts.output}: ${(e as Error).message}`);
    }
    timing?.lap(`${format} report written`);
    process.stdout.write(formatText(report, { ...fctx, color }));
  } else if (format === 'text') {
    process.stdout.write(formatText(report, { ...fctx, color }));
  } else if (format === 'json') {
    (await import('../format/json')).writeJson(report, (chunk) => process.stdout.write(chunk));
  } else {
    process.stdout.write((await formatterFor(format))(report, fctx));
  }
  timing?.lap('terminal output');
  let code: number = baselineCode ?? exitCodeOf(report);
  if (target) {
    const uploaded = await uploadAfterCheck({
      report: attachHardware(report, summaries, summaryFiles), cwd, root, target, policy: server.policy, quiet: !!opts.quiet, version: ctx.version,
      jsonOutput: opts.output && format === 'json' ? opts.output : null,
      say: (line) => err(`${line}\n`),
    });
    timing?.lap('upload');
    // An invalid design (2) still wins; otherwise a failed upload is 3.
    if (!uploaded && code !== 2) code = 3;
  }
  timing?.print();
  return code;
}

async function formatterFor(format: ReportFormat): Promise<Formatter> {
  switch (format) {
    case 'json':
      return (await import('../format/json')).formatJson;
    case 'junit':
      return (await import('../format/junit')).formatJunit;
    case 'github':
      return (await import('../format/github')).formatGithub;
    case 'markdown':
      return (await import('../format/markdown')).formatMarkdown;
    case 'sarif':
      return (await import('../format/sarif')).formatSarif;
    case 'gitlab':
      return (await import('../format/gitlab')).formatGitlab;
    default:
      return formatText;
  }
}

interface Engine {
  runDesignText: (text: string, file: string, options: { rules: EffectiveRules; afterLoad?: () => void }) => DesignRun;
  locate: (text: string, diagnostics: Diagnostic[]) => Diagnostic[];
  maxBytes: number;
}

/** The engine is loaded on first use, so `pleat --version` and `pleat schema` stay quick. */
async function loadEngine(): Promise<Engine> {
  const [pipeline, load, pos] = await Promise.all([
    import('../../shared/pipeline'),
    import('../../shared/design/load'),
    import('../../shared/design/positions'),
  ]);
  return { runDesignText: pipeline.runDesignText, locate: pos.locate, maxBytes: load.DEFAULT_LIMITS.maxBytes };
}

/**
 * Designs from this size (about 13,000 edges) get a full garbage collection after loading and
 * after checking: V8 runs none between the load and the end of a large check, so the parsed
 * document and the engine's intermediate results would still count at the peak. Measured at
 * 100,000 edges: 226 -> 196 MB peak RSS for some 0.1 s of collections (docs/performance.md,
 * "Peak memory"); on small files a collection would cost more than it saves.
 */
const COLLECT_FROM_BYTES = 1024 * 1024;

let gc: (() => void) | null = null;
/** A full collection, from inside the program: the user passes no flag. */
function collectGarbage(): void {
  if (!gc) {
    setFlagsFromString('--expose-gc');
    gc = runInNewContext('gc') as () => void;
  }
  gc();
}

class Timer {
  private last = performance.now();
  private readonly laps: [string, number][] = [];
  lap(what: string): void {
    const now = performance.now();
    this.laps.push([what, now - this.last]);
    this.last = now;
  }
  print(): void {
    const at = process.uptime() * 1000;
    for (const [what, ms] of this.laps) process.stderr.write(`pleat timing: ${ms.toFixed(1).padStart(8)} ms  ${what}\n`);
    process.stderr.write(`pleat timing: ${at.toFixed(1).padStart(8)} ms  since the process started\n`);
  }
}

function checkOne(abs: string, file: string, effective: EffectiveRules, engine: Engine, timing: Timer | null = null): Checked {
  const t0 = performance.now();
  const result: Checked = { abs, file, report: null, ms: 0 };
  try {
    // Refuse oversized files before reading them into memory.
    // Synchronous reads: files are checked one after the other, and node:fs/promises costs start-up time.
    const s = statSync(abs);
    if (!s.isFile()) {
      // A FIFO or a device would block the read or never end: say what it is instead.
      const what = s.isFIFO() ? 'a named pipe (FIFO)' : s.isSocket() ? 'a socket' : s.isCharacterDevice() || s.isBlockDevice() ? 'a device' : s.isDirectory() ? 'a folder' : 'not a regular file';
      result.diagnostics = [{ severity: 'error', code: 'file-unreadable', message: `cannot read it as a design file: it is ${what}`, line: null, column: null }];
      return result;
    }
    if (s.size > engine.maxBytes) {
      result.diagnostics = [{ severity: 'error', code: 'file-too-large', message: `the file is ${formatBytes(s.size)}; the limit is ${formatBytes(engine.maxBytes)}`, line: 1, column: 1 }];
      result.ms = performance.now() - t0;
      return result;
    }
    // Bytes, decoded strictly: a replaced byte could turn an id into another one and pass.
    const decoded = decodeDesignBytes(readFileSync(abs));
    if (decoded.text === null) {
      result.diagnostics = [decoded.diagnostic];
      result.ms = performance.now() - t0;
      return result;
    }
    const text = decoded.text;
    timing?.lap(`${file}: read`);
    result.bytes = s.size;
    result.report = engine.runDesignText(text, file, { rules: effective, ...(s.size >= COLLECT_FROM_BYTES ? { afterLoad: collectGarbage } : {}) }).report;
    timing?.lap(`${file}: checked`);
  } catch (e) {
    result.diagnostics = [{ severity: 'error', code: 'file-unreadable', message: `cannot read the file: ${(e as Error).message}`, line: null, column: null }];
  } finally {
    result.ms = performance.now() - t0;
  }
  return result;
}

/** Design names are unique in a repository: every later file with a name already seen is invalid. */
function markDuplicateNames(checked: Checked[], locate: Engine['locate']): void {
  const first = new Map<string, Checked>();
  for (const c of checked) {
    const r = c.report;
    if (!r || !r.name || r.status === 'error') continue;
    const earlier = first.get(r.name);
    if (!earlier) {
      first.set(r.name, c);
      continue;
    }
    let d: Diagnostic = {
      severity: 'error',
      code: 'duplicate-design-name',
      message: `design name "${r.name}" is already used by ${earlier.file}; names must be unique in a repository`,
      line: null,
      column: null,
      path: ['name'],
    };
    // The text is not kept after checking (it can be large); read it again for this rare case.
    try {
      d = locate(readFileSync(c.abs, 'utf8'), [d])[0] ?? d;
    } catch {
      /* keep it without a position */
    }
    // An error makes the design's analysis fields null, as for any invalid design.
    c.report = designReport({ file: r.file, name: r.name, diagnostics: [...r.diagnostics, d], analysis: null });
  }
}

export type { Report };
