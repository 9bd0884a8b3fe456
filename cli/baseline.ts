// Reads the baseline file of `pleat check --baseline` (format pleat-baseline/1, written by
// `pleat baseline`); a file that is not one is a command-line error (exit 2) saying why.
import { readFileSync } from 'node:fs';
import { CliError } from './context';
import { parseBaseline, type Baseline } from '../shared/report/baseline';

/** Reads a baseline file for `check --baseline`; a clear error (exit 2) when it is not one. */
export function readBaseline(abs: string, shown: string): Baseline {
  let text: string;
  try {
    text = readFileSync(abs, 'utf8');
  } catch (e) {
    throw new CliError(`cannot read the baseline ${shown}: ${(e as NodeJS.ErrnoException).code === 'ENOENT' ? 'no such file (`pleat baseline` writes it)' : (e as Error).message}`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new CliError(`the baseline ${shown} is not JSON: ${(e as Error).message}`);
  }
  const { baseline, problem } = parseBaseline(json);
  if (!baseline) throw new CliError(`the baseline ${shown} is not a pleat baseline: ${problem}`);
  return baseline;
}
