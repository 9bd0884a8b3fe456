// `--hardware-summary FILE` of `pleat check --upload` and `pleat upload`: reads the summaries
// that `pleat rtl --area` wrote (`<top>.hardware.json`, docs/rtl.md) and attaches each to the
// report's design of the same name as designs[].hardware (docs/cli.md, "Hardware summaries").
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { hardwareSummaryProblem, type HardwareSummary } from '../../shared/report/hardwareSummary';
import type { Report } from '../../shared/types';
import { CliError } from '../context';

/** A summary is a few hundred bytes; anything far larger is not one. */
const MAX_SUMMARY_BYTES = 1024 * 1024;

/** commander's collector of a repeatable option. */
export function collect(value: string, previous: string[] = []): string[] {
  return [...previous, value];
}

/** Line and column (1-based) of a character offset. */
function lineColumn(text: string, offset: number): string {
  const before = text.slice(0, offset);
  const line = before.split('\n').length;
  return `${line}:${offset - before.lastIndexOf('\n')}`;
}

/** Reads and checks the summary files; a bad one is a command-line error (exit 2) naming file:line:column. */
export function readHardwareSummaries(files: string[], cwd: string): HardwareSummary[] {
  return files.map((file) => {
    const abs = path.resolve(cwd, file);
    let text: string;
    try {
      if (statSync(abs).size > MAX_SUMMARY_BYTES) throw new CliError(`${file}: larger than 1 MiB; not a hardware summary of pleat rtl --area`);
      text = readFileSync(abs, 'utf8');
    } catch (e) {
      if (e instanceof CliError) throw e;
      throw new CliError(`cannot read the hardware summary ${file}: ${(e as Error).message}`);
    }
    let value: unknown;
    try {
      value = JSON.parse(text);
    } catch (e) {
      const m = /position (\d+)/.exec((e as Error).message);
      const at = m ? lineColumn(text, Number(m[1])) : '1:1';
      throw new CliError(`${file}:${at}: not JSON: ${(e as Error).message.replace(/ in JSON at position \d+.*$/, '')}`);
    }
    const problem = hardwareSummaryProblem(value);
    if (problem) throw new CliError(`${file}:1:1: not a hardware summary of pleat rtl --area (pleat-hardware version 1): ${problem}`);
    return value as HardwareSummary;
  });
}

/**
 * The report with each summary on the design of its name (designs[].hardware). A summary of a
 * design the report does not have, or of a name two designs share, is a command-line error:
 * attaching it to a guess would put one design's area on another's history.
 */
export function attachHardware(report: Report, summaries: HardwareSummary[], files: string[]): Report {
  if (!summaries.length) return report;
  const byDesign = new Map<number, HardwareSummary>();
  summaries.forEach((s, i) => {
    const matches = report.designs.flatMap((d, k) => ((d.name ?? d.file) === s.design ? [k] : []));
    if (matches.length === 0) throw new CliError(`${files[i]}: the summary is of design "${s.design}", which this report does not have; run pleat rtl --area on a design the check covers`);
    if (matches.length > 1) throw new CliError(`${files[i]}: ${matches.length} designs of the report are named "${s.design}"; the summary cannot tell which is its own`);
    if (byDesign.has(matches[0]!)) throw new CliError(`${files[i]}: a second hardware summary of design "${s.design}"`);
    byDesign.set(matches[0]!, s);
  });
  return { ...report, designs: report.designs.map((d, k) => (byDesign.has(k) ? { ...d, hardware: byDesign.get(k)! } : d)) };
}
