// Markdown for a CI job summary (a file the CI shows on the job's page, e.g. GitHub's
// $GITHUB_STEP_SUMMARY): the gate verdict, one line per design with its folding figures, then
// per design that does not fold what broke, where, and what would fix it (and per design that
// folds with warnings, those).
import { designFindings } from '../../shared/report/findings';
import type { DesignReport, Report } from '../../shared/types';
import { fraction, pct, type FormatContext } from './common';
import { escapeControlsDeep } from './escape';
import { gateLine, verdictWord } from './text';

/** Text in a table cell or a line: no markup of its own, no line break, no pipe. */
export function mdText(s: string): string {
  // Underscores inside words (rule names) stay: Markdown does not read them as emphasis.
  return s.replace(/\r?\n/g, ' ').replace(/([\\`*[\]<|])/g, '\\$1');
}

function code(s: string): string {
  const t = s.replace(/\r?\n/g, ' ');
  const fence = t.includes('`') ? '``' : '`';
  return `${fence}${fence.length > 1 ? ' ' : ''}${t}${fence.length > 1 ? ' ' : ''}${fence}`;
}

function figures(d: DesignReport): string[] {
  if (d.status === 'error' || d.factor == null) return ['-', '-', '-', '-'];
  return [
    String(d.factor),
    d.utilization ? pct(d.utilization.overall) : '-',
    d.registers ? String(d.registers.minimum) : '-',
    d.iterationBound ? fraction(d.iterationBound.numerator, d.iterationBound.denominator) : '-',
  ];
}

export function formatMarkdown(raw: Report, ctx: FormatContext = {}): string {
  const report = escapeControlsDeep(raw);
  const repoFile = ctx.repositoryFile ?? ((f: string) => f);
  const absolute = ctx.absoluteFile ?? ((f: string) => f);
  const shown = (f: string) => repoFile(f) ?? `${absolute(f)} (outside the repository)`;
  const out: string[] = [];
  const mark = report.verdict === 'pass' ? 'holds' : report.verdict === 'fail' ? 'broken' : 'invalid';
  out.push(`### Folding gate ${mark}`, '');
  out.push(mdText(gateLine(report)), '');
  out.push('| design | verdict | N | utilization | registers | iteration bound | file |');
  out.push('| --- | --- | ---: | ---: | ---: | ---: | --- |');
  for (const d of report.designs) {
    const [n, u, r, b] = figures(d);
    out.push(`| ${mdText(d.name ?? '(unnamed)')} | ${mdText(verdictWord(d))} | ${n} | ${u} | ${r} | ${b} | ${code(shown(d.file))} |`);
  }
  for (const d of report.designs) {
    const findings = designFindings(d).filter((f) => f.severity === 'error' || !ctx.quiet);
    // A design that folds gets a section only for its warnings (a format too narrow for its bit growth).
    if (d.status === 'pass' && findings.length === 0) continue;
    out.push('', `#### ${mdText(d.name ?? d.file)}: ${mdText(verdictWord(d))}`, '');
    for (const f of findings) {
      const where = f.line ? `${shown(f.file)}:${f.line}:${f.column ?? 1}` : shown(f.file);
      out.push(`- **${mdText(f.ruleId)}** at ${code(where)}: ${mdText(f.message)}`);
      for (const fix of f.fixes) out.push(`  - fix: ${mdText(fix)}`);
    }
  }
  const rules = Object.entries(report.rules)
    .filter(([, r]) => r)
    .map(([name, r]) => `${name}=${String(r!.value)} (${r!.source})`);
  out.push('', `Rules in force: ${mdText(rules.length ? rules.join(', ') : 'none')}. A pass is an engineering aid, not a sign-off of the hardware.`);
  return `${out.join('\n')}\n`;
}
