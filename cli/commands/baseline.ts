// `pleat baseline [paths...]`: checks the designs as `pleat check` does and writes their broken
// rules to a baseline file (pleat-baseline/1, docs/cli.md) to commit, so that
// `pleat check --baseline FILE` fails only on what is new or worse.
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { CliError, type CliContext, type RegisterCommand } from '../context';
import { baselineOf } from '../../shared/report/baseline';
import { checkToReport } from './check';

export const DEFAULT_BASELINE = 'pleat-baseline.json';

interface BaselineOptions {
  output: string;
  config?: string;
  color: boolean;
}

export const register: RegisterCommand = (program: Command, ctx: CliContext) => {
  program
    .command('baseline')
    .description('write the broken rules of the designs to a baseline file, for `pleat check --baseline`')
    .argument('[paths...]', 'design files, folders or globs (default: the designs of pleat.config.yaml)')
    .option('-o, --output <file>', 'the baseline file to write', DEFAULT_BASELINE)
    .option('-c, --config <file>', 'use this config file instead of looking for pleat.config.yaml')
    .option('--no-color', 'never colour the output')
    .action(async (paths: string[], opts: BaselineOptions) => {
      process.exitCode = await runBaseline(paths, opts, ctx);
    });
};

async function runBaseline(paths: string[], opts: BaselineOptions, ctx: CliContext): Promise<number> {
  const { report, cwd } = await checkToReport(paths, { config: opts.config, quiet: true, color: opts.color }, ctx);
  const invalid = report.designs.filter((d) => d.status === 'error');
  if (invalid.length) {
    // An invalid file has no findings to accept; a baseline must not hide it.
    throw new CliError(`no baseline written: ${invalid.map((d) => d.file).join(', ')} ${invalid.length === 1 ? 'is' : 'are'} invalid (run \`pleat check\` to see why)`);
  }
  const baseline = baselineOf(report, ctx.version);
  const out = path.resolve(cwd, opts.output);
  try {
    mkdirSync(path.dirname(out), { recursive: true });
    writeFileSync(out, `${JSON.stringify(baseline, null, 2)}\n`);
  } catch (e) {
    throw new CliError(`cannot write the baseline to ${opts.output}: ${(e as Error).message}`);
  }
  const designs = new Set(baseline.findings.map((f) => f.design)).size;
  process.stdout.write(`baseline ${opts.output}: ${baseline.findings.length} broken rule${baseline.findings.length === 1 ? '' : 's'} of ${designs} design${designs === 1 ? '' : 's'} (of ${report.designs.length} checked); commit it and run \`pleat check --baseline ${opts.output}\`\n`);
  return 0;
}
