// The words Pleat posts on a pull/merge request: the commit status's one line and the summary
// comment (Markdown, read by both hosts). Pure: the run's report and its comparison in, text out.
import type { Comparison, DesignDelta } from '../../../shared/report/api';
import type { Report } from '../../../shared/types';

/** Hidden in the comment, so the comment is found and edited even when its id was lost. */
export const COMMENT_MARKER = '<!-- pleat:pull-request-summary -->';

const pct = (v: number | null) => (v === null ? 'none' : `${(v * 100).toFixed(1)}%`);
const num = (v: number | null) => (v === null ? 'none' : String(v));
const code = (s: string) => `\`${s.replace(/`/g, "'")}\``;
const REGRESSION: Record<string, string> = { status: 'verdict', utilization: 'utilization', registerMinimum: 'registers', violations: 'rule breaks' };

/** Makes a Markdown link to a file (and line) at the run's commit on the host; absent: plain text. */
export type FileLink = (file: string, line: number | null) => string | null;

/** A file reference: `file:line[:column]`, linked to the host's file view when there is one. */
function place(file: string, line: number | null | undefined, column: number | null | undefined, link?: FileLink): string {
  const text = line ? `${file}:${line}${column ? `:${column}` : ''}` : file;
  const url = link?.(file, line ?? null);
  return url ? `[${text}](${url})` : text;
}

/** What broke in the report: one line per design that does not pass, naming the rule or the first error. */
export function brokenLines(report: Report, link?: FileLink): string[] {
  const out: string[] = [];
  for (const d of report.designs) {
    if (d.status === 'error') {
      const first = d.diagnostics.find((x) => x.severity === 'error') ?? d.diagnostics[0];
      out.push(`${code(d.name ?? d.file)} cannot be checked: ${first ? `${first.code} at ${place(d.file, first.line, first.column, link)}: ${first.message}` : `the file ${place(d.file, null, null, link)} is not valid`}`);
    } else if (d.status === 'fail') {
      const rules = d.violations.map((v) => `${code(v.rule)} (${v.source} rule${v.unit ? `, unit ${v.unit}` : ''}: ${v.actual} against the limit ${v.limit}${v.line ? `, ${place(d.file, v.line, v.column, link)}` : ''})`);
      out.push(`${code(d.name ?? d.file)} (${place(d.file, null, null, link)}) breaks ${rules.length ? rules.join(', ') : 'a rule'}`);
    }
  }
  return out;
}

function movedLine(d: DesignDelta, baseBranch: string): string | null {
  if (d.presence === 'added') return `${code(d.name)} is new (not on ${baseBranch})`;
  if (d.presence === 'removed') return `${code(d.name)} is gone (it was on ${baseBranch})`;
  const parts: string[] = [];
  if (d.baseStatus !== d.status) parts.push(`verdict ${d.baseStatus} to ${d.status}`);
  if (d.utilization.delta) parts.push(`utilization ${pct(d.utilization.base)} to ${pct(d.utilization.current)}`);
  if (d.registerMinimum.delta) parts.push(`registers ${num(d.registerMinimum.base)} to ${num(d.registerMinimum.current)}`);
  if (d.violations.delta) parts.push(`rule breaks ${num(d.violations.base)} to ${num(d.violations.current)}`);
  if (!parts.length) return null;
  const past = d.regressions.length ? ` (worse past the project's tolerance: ${d.regressions.map((r) => REGRESSION[r] ?? r).join(', ')})` : '';
  return `${code(d.name)}: ${parts.join('; ')}${past}`;
}

/** The gate's verdict in the words of `pleat check`'s closing line (docs/cli.md): holds, broken, invalid. */
export function gateWords(report: Report): string {
  return report.verdict === 'pass' ? 'gate holds' : report.verdict === 'fail' ? 'gate broken' : 'gate invalid';
}

export function verdictLine(report: Report): string {
  const n = report.designs.length;
  const failed = report.designs.filter((d) => d.status === 'fail').length;
  const invalid = report.designs.filter((d) => d.status === 'error').length;
  const designs = `design${n === 1 ? '' : 's'}`;
  if (report.verdict === 'pass') return n === 1 ? 'the one design folds within the rules' : `all ${n} designs fold within the rules`;
  return [failed ? `${failed} of ${n} ${designs} break a rule` : '', invalid ? `${invalid} of ${n} ${designs} cannot be checked` : ''].filter(Boolean).join(', ');
}

/** The commit status's description: short (GitHub keeps 140 characters; from memory). */
export function statusDescription(report: Report): string {
  const line = `Pleat ${gateWords(report)}: ${verdictLine(report)}`;
  return line.length <= 140 ? line : `${line.slice(0, 139)}…`;
}

export function summaryComment(o: { report: Report; comparison: Comparison; branch: string; commit: string; link: string; fileLink?: FileLink }): string {
  const { report, comparison: c } = o;
  const lines = [COMMENT_MARKER, `#### Pleat: ${gateWords(report)} (${verdictLine(report)})`, ''];
  lines.push(`Commit ${code(o.commit.slice(0, 12))} of ${code(o.branch)}.`);
  const broken = brokenLines(report, o.fileLink);
  if (broken.length) lines.push('', '**What broke**', '', ...broken.map((b) => `- ${b}`));
  if (c.baseRun) {
    const moved = c.designs.map((d) => movedLine(d, c.baseBranch)).filter((x): x is string => x !== null);
    const basis = c.basis === 'merge-base' ? 'its merge base' : 'its latest run before this one';
    lines.push('', `**Against ${code(c.baseBranch)}** (${basis}, commit ${code(c.baseRun.commit.slice(0, 12))})`, '');
    lines.push(...(moved.length ? moved.map((m) => `- ${m}`) : ['- no design moved']));
  } else {
    lines.push('', `No run of ${code(c.baseBranch)} to compare with yet.`);
  }
  lines.push('', `[Open the run in Pleat](${o.link})`, '');
  lines.push('<sub>Edited on every push. Pleat is an engineering aid: its verdict is not a sign-off of safety-relevant hardware.</sub>');
  return lines.join('\n');
}
