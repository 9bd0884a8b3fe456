// GitHub Actions workflow commands: one annotation per problem, so a pull request shows each
// one on its line. Escaping follows GitHub's toolkit: in data % CR LF, in properties also : and ,.
import type { Report } from '../../shared/types';
import { designFindings } from '../../shared/report/findings';
import type { FormatContext } from './common';
import { gateLine } from './text';
import { escapeControls, escapeControlsDeep } from './escape';

export function escapeData(s: string): string {
  return s.replace(/%/g, '%25').replace(/\r/g, '%0D').replace(/\n/g, '%0A');
}

export function escapeProperty(s: string): string {
  return escapeData(s).replace(/:/g, '%3A').replace(/,/g, '%2C');
}

function command(kind: 'error' | 'warning' | 'notice', props: Record<string, string | number | null | undefined>, message: string): string {
  const p = Object.entries(props)
    .filter(([, v]) => v !== null && v !== undefined && v !== '')
    .map(([k, v]) => `${k}=${escapeProperty(String(v))}`)
    .join(',');
  return `::${kind}${p ? ` ${p}` : ''}::${escapeData(message)}`;
}

export function formatGithub(raw: Report, ctx: FormatContext = {}): string {
  // Workflow commands are read from the log line by line: no control character may reach it raw.
  const report = escapeControlsDeep(raw);
  const annotation = ctx.annotationFile ?? ((f: string) => f);
  const fileOf = (f: string) => escapeControls(annotation(f));
  const lines: string[] = [];
  for (const d of report.designs) {
    const file = fileOf(d.file);
    for (const x of d.diagnostics) {
      if (ctx.quiet && x.severity !== 'error') continue;
      lines.push(command(x.severity, { file, line: x.line, col: x.column, title: `pleat ${x.code}` }, x.message));
    }
    // The annotation carries what would fix it (a message may span lines: %0A).
    // designFindings lists the violations first, in their order.
    const findings = designFindings(d);
    for (const [i, v] of d.violations.entries()) {
      const f = findings[i];
      const fixes = f.fixes.map((x) => `\nfix: ${x}`).join('');
      lines.push(command('error', { file, line: f.line, col: f.column, title: `pleat rule ${v.rule} (${v.source})` }, `${d.name ?? d.file}: ${v.message}${fixes}`));
    }
  }
  lines.push(command('notice', { title: `pleat ${report.verdict}` }, gateLine(report)));
  return `${lines.join('\n')}\n`;
}
