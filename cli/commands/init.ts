// `pleat init`: writes a starter pleat.config.yaml and one example design into the working
// directory, refusing to overwrite anything unless --force is given.
import { existsSync } from 'node:fs';
import { mkdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { chmod } from 'node:fs/promises';
import { Option, type Command } from 'commander';
import { CONFIG_NAME } from '../config';
import { gitRoot } from '../git';
import { CI_TEMPLATES, hookText } from '../init/templates';
import { CliError, type RegisterCommand } from '../context';

export const STARTER_DESIGN = 'designs/starter.fold.yaml';

const CONFIG_TEXT = `# Pleat configuration: which designs \`pleat check\` reads and the rules they must pass.
# Reference: docs/cli.md of the pleat package.
designs: ["**/*.fold.yaml"]   # globs relative to this file; node_modules and .git are skipped

rules:
  negative_delays: retime     # fail | retime (default) | warn
  # min_utilization: 0.5      # share of all unit slots doing work, 0..1
  # min_unit_utilization: 0.25  # the same for every single unit
  # max_registers: 64         # on the lifetime-analysis minimum

# server:                     # where \`pleat check --upload\` sends reports (token: PLEAT_TOKEN)
#   url: http://127.0.0.1:4180
#   project: my-project
`;

// Three-tap smoothing filter for a temperature probe, in transposed form: three products share
// one multiplier and two sums share one adder over N = 3 clock cycles per sample.
const DESIGN_TEXT = `format: pleat/1
name: probe-smoother
description: Three-tap smoothing filter for a temperature probe, one multiplier and one adder shared over 3 cycles
clock_ns: 10
kinds:
  add: { time: 1 }
  mul: { time: 2 }
units:
  - { id: MUL1, kind: mul, stages: 1 }
  - { id: ADD1, kind: add, stages: 0 }
nodes:
  - { id: x,  kind: input }
  - { id: m0, kind: mul, coefficient: 0.25 }
  - { id: m1, kind: mul, coefficient: 0.5 }
  - { id: m2, kind: mul, coefficient: 0.25 }
  - { id: a1, kind: add }
  - { id: a0, kind: add }
  - { id: y,  kind: output }
edges:
  - { from: x,  to: m0 }
  - { from: x,  to: m1 }
  - { from: x,  to: m2 }
  - { from: m2, to: a1, delays: 1 }
  - { from: m1, to: a1 }
  - { from: a1, to: a0, delays: 1 }
  - { from: m0, to: a0 }
  - { from: a0, to: y }
folding:
  factor: 3
  sets:
    MUL1: [m0, m1, m2]
    ADD1: [~, a0, a1]
`;

export const register: RegisterCommand = (program: Command) => {
  program
    .command('init')
    .description(`write a starter ${CONFIG_NAME} and an example design (${STARTER_DESIGN}) into the current folder; or a CI job (--ci) or a pre-commit hook (--hook)`)
    .option('--force', 'overwrite those files if they exist')
    .addOption(new Option('--ci <host>', 'write a ready CI job for this hosted CI system instead').choices(Object.keys(CI_TEMPLATES)))
    .option('--hook', 'write a git pre-commit hook that checks the staged design files instead')
    .addHelpText('after', '\nThen: `pleat check` verifies the designs; for a design without folding sets, `pleat plan FILE --write` writes them and `pleat sweep FILE --factors 2..16` compares folding factors (docs/cli.md).')
    .action(async (opts: { force?: boolean; ci?: string; hook?: boolean }) => {
      const cwd = process.cwd();
      if (opts.ci || opts.hook) {
        if (opts.ci) await writeCiJob(opts.ci, cwd, !!opts.force);
        if (opts.hook) await writeHook(cwd, !!opts.force);
        return;
      }
      const targets = [
        { rel: CONFIG_NAME, text: CONFIG_TEXT },
        { rel: STARTER_DESIGN, text: DESIGN_TEXT },
      ];
      const existing = targets.filter((t) => existsSync(path.join(cwd, t.rel)));
      if (existing.length > 0 && !opts.force) {
        throw new CliError(`${existing.map((t) => t.rel).join(' and ')} already exist${existing.length === 1 ? 's' : ''}; nothing was written (use --force to overwrite)`);
      }
      for (const t of targets) {
        const abs = path.join(cwd, t.rel);
        try {
          await mkdir(path.dirname(abs), { recursive: true });
          await writeFile(abs, t.text);
        } catch (e) {
          throw new CliError(`cannot write ${t.rel}: ${(e as Error).message}`);
        }
        process.stdout.write(`wrote ${t.rel}\n`);
      }
      process.stdout.write('next: pleat check\n');
      process.stdout.write('a design without folding sets: pleat plan FILE --write places its operations (pleat sweep FILE --factors 2..16 compares N)\n');
    });
};

/** The CI job goes to the repository root (the git work tree), where the CI looks for it. */
async function writeCiJob(host: string, cwd: string, force: boolean): Promise<void> {
  const t = CI_TEMPLATES[host];
  const root = gitRoot(cwd) ?? cwd;
  const abs = path.join(root, t.file);
  const shown = path.relative(cwd, abs) || t.file;
  if (existsSync(abs) && !force) throw new CliError(`${shown} already exists; nothing was written (use --force to overwrite)`);
  try {
    await mkdir(path.dirname(abs), { recursive: true });
    await writeFile(abs, t.text);
  } catch (e) {
    throw new CliError(`cannot write ${shown}: ${(e as Error).message}`);
  }
  process.stdout.write(`wrote ${shown} (${t.host})\n`);
  process.stdout.write(`next: keep the project's CI token as ${t.secret}, and set server.url and server.project in ${CONFIG_NAME}\n`);
}

/** The hook goes where git runs hooks from (core.hooksPath honoured), made executable. */
async function writeHook(cwd: string, force: boolean): Promise<void> {
  const r = spawnSync('git', ['rev-parse', '--git-path', 'hooks'], { cwd, encoding: 'utf8' });
  if (r.error || r.status !== 0) throw new CliError('--hook needs a git repository: run it inside the work tree (git init first)');
  const abs = path.resolve(cwd, r.stdout.trim(), 'pre-commit');
  const shown = path.relative(cwd, abs) || abs;
  if (existsSync(abs) && !force) throw new CliError(`${shown} already exists; nothing was written (use --force to overwrite it, or call pleat from the hook you have)`);
  try {
    await mkdir(path.dirname(abs), { recursive: true });
    await writeFile(abs, hookText(process.execPath, path.resolve(process.argv[1])));
    await chmod(abs, 0o755);
  } catch (e) {
    throw new CliError(`cannot write ${shown}: ${(e as Error).message}`);
  }
  process.stdout.write(`wrote ${shown}: each commit checks its staged design files (git commit --no-verify skips it once)\n`);
}
