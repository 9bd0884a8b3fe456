// Small helpers shared by the report formatters.
import type { ChalkInstance } from 'chalk';
import type { BaselineOutcome } from '../../shared/report/baseline';
import type { Diagnostic, Report } from '../../shared/types';
import { escapeControls } from './escape';

export interface FormatContext {
  /** How a report path is shown (text: relative to the working directory). */
  displayFile?: (file: string) => string;
  /** How a report path is named in GitHub annotations (relative to the work tree root). */
  annotationFile?: (file: string) => string;
  /**
   * A report path relative to the repository's work tree (forward slashes), or null when the
   * file lies outside it (SARIF, code quality, Markdown say so instead of writing `../`).
   */
  repositoryFile?: (file: string) => string | null;
  /** The absolute path of a report path, to name a file outside the work tree. */
  absoluteFile?: (file: string) => string;
  color?: ChalkInstance;
  /** `check --baseline`: the file and which broken rules it accepts. */
  baseline?: { file: string; outcome: BaselineOutcome };
  /** Only failures and errors. */
  quiet?: boolean;
  /** Milliseconds spent on each design, by report path. */
  timings?: Map<string, number>;
  /** When the check started (ISO 8601), for JUnit timestamps. */
  startedAt?: string;
}

export type Formatter = (report: Report, ctx: FormatContext) => string;

export function pct(x: number): string {
  return `${Math.round(x * 1000) / 10}%`;
}

export function fraction(num: number, den: number): string {
  return den === 1 ? String(num) : `${num}/${den}`;
}

export function diagnosticLine(file: string, d: Diagnostic): string {
  const f = escapeControls(file);
  const where = d.line !== null ? `${f}:${d.line}:${d.column ?? 1}` : f;
  return `${where}: ${d.severity} ${d.code}: ${escapeControls(d.message)}`;
}

export function plural(n: number, word: string, many = `${word}s`): string {
  return `${n} ${n === 1 ? word : many}`;
}
