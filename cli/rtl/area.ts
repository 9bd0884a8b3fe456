// Area and logic depth of a Verilog bundle by Yosys (`pleat rtl --area`, docs/rtl.md "Does sharing
// pay?"). Yosys's log format belongs to the CLI, which runs Yosys; the engine never sees it.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { CliError } from '../context';

export interface AreaFigures {
  cells: number;
  /** Flip-flop bits (every $_*DFF*_ cell of the generic netlist). */
  registers: number;
  /** Levels of generic cells on the longest path without a flip-flop (`ltp -noff`); null when the netlist has a combinational loop. */
  depth: number | null;
  /** Cell counts by type. */
  byType: Record<string, number>;
}

export interface SynthesisInput {
  top: string;
  /** File names, relative to `dir`. */
  files: string[];
  dir: string;
}

/**
 * The Yosys script. Unit modules are kept whole through `synth` (keep_hierarchy), so a unit
 * whose coefficient is a constant at its instance still gets a general multiplier: the folded
 * units must multiply by whatever their coefficient multiplexer gives, and the parallel reference
 * is synthesized the same way, multipliers compared with multipliers. Then the attribute goes,
 * the netlist is flattened (no further optimisation) and measured: `stat` for cells and
 * flip-flops, `ltp -noff` for the longest path of generic cells between flip-flops and ports.
 */
export function yosysScript(input: SynthesisInput, statFile: string, ltpFile: string): string {
  return [
    `read_verilog ${input.files.join(' ')}`,
    `hierarchy -top ${input.top}`,
    'setattr -mod -set keep_hierarchy 1 *',
    `setattr -mod -unset keep_hierarchy ${input.top}`,
    `synth -top ${input.top}`,
    'setattr -mod -unset keep_hierarchy *',
    'flatten',
    'opt_clean',
    `tee -q -o ${statFile} stat`,
    `tee -q -o ${ltpFile} ltp -noff`,
  ].join('; ');
}

function run(cmd: string, args: string[], cwd: string): { ok: boolean; out: string; missing: boolean } {
  const r = spawnSync(cmd, args, { cwd, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (r.error) return { ok: false, out: String(r.error.message), missing: (r.error as NodeJS.ErrnoException).code === 'ENOENT' };
  return { ok: r.status === 0, out: `${r.stdout ?? ''}${r.stderr ?? ''}`, missing: false };
}

/** Synthesizes one bundle to generic cells and measures it; throws a CliError when Yosys is missing or fails. */
export function synthesize(input: SynthesisInput): AreaFigures {
  const stat = `${input.top}.yosys-stat.txt`;
  const ltp = `${input.top}.yosys-ltp.txt`;
  const r = run('yosys', ['-q', '-p', yosysScript(input, stat, ltp)], input.dir);
  if (r.missing) throw new CliError('--area needs Yosys on the PATH (Debian: apt-get install yosys, or bash scripts/ensure-hdl-tools.sh)');
  if (!r.ok) throw new CliError(`yosys failed on ${input.top}: ${r.out.trim().split('\n').slice(-3).join(' ')}`);
  const figures = parseYosysStat(readFileSync(path.join(input.dir, stat), 'utf8'));
  if (!figures) throw new CliError(`could not read Yosys statistics for ${input.top}`);
  return { ...figures, depth: parseYosysLtp(readFileSync(path.join(input.dir, ltp), 'utf8')) };
}

export function yosysVersion(cwd: string): string {
  return run('yosys', ['-V'], cwd).out.trim();
}

/** Reads the last `stat` block of a Yosys log: total cells and flip-flops. */
export function parseYosysStat(text: string): Omit<AreaFigures, 'depth'> | null {
  const at = text.lastIndexOf('Number of cells:');
  if (at < 0) return null;
  const cells = Number(/Number of cells:\s+(\d+)/.exec(text.slice(at))![1]);
  const byType: Record<string, number> = {};
  for (const m of text.slice(at).matchAll(/^\s+(\$\S+)\s+(\d+)\s*$/gm)) byType[m[1]!] = Number(m[2]);
  let registers = 0;
  for (const [t, n] of Object.entries(byType)) if (/DFF/i.test(t)) registers += n;
  return { cells, registers, byType };
}

/**
 * The length of `ltp`'s longest topological path: the number of cells on it. Null when ltp found
 * a loop (a combinational loop through multiplexers, docs/rtl.md) or printed no length.
 */
export function parseYosysLtp(text: string): number | null {
  if (/Detected loop/i.test(text)) return null;
  const m = /Longest topological path in \S+ \(length=(\d+)\)/.exec(text);
  return m ? Number(m[1]) : null;
}
