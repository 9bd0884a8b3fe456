// `pleat init`: writes a starter pleat.config.yaml and one example design into the working
// directory, refusing to overwrite anything unless --force is given.
import { existsSync } from 'node:fs';
import { mkdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import type { Command } from 'commander';
import { CONFIG_NAME } from '../config';
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
    .description(`write a starter ${CONFIG_NAME} and an example design (${STARTER_DESIGN}) into the current folder`)
    .option('--force', 'overwrite those files if they exist')
    .addHelpText('after', '\nThen: `pleat check` verifies the designs; for a design without folding sets, `pleat plan FILE --write` writes them and `pleat sweep FILE --factors 2..16` compares folding factors (docs/cli.md).')
    .action(async (opts: { force?: boolean }) => {
      const cwd = process.cwd();
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
