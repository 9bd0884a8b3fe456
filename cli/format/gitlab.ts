// Code-quality JSON as GitLab's merge-request widget reads it: an array of issues, each with
// description, check_name, fingerprint, severity and location.path / location.lines.begin (the
// fields GitLab documents as required for its Code Quality report). Paths are relative to the
// repository's work tree; a design outside it keeps its absolute path and the description says so.
import { createHash } from 'node:crypto';
import { reportFindings } from '../../shared/report/findings';
import type { Report } from '../../shared/types';
import type { FormatContext } from './common';
import { escapeControlsDeep } from './escape';
import { findingText } from './sarif';

export interface CodeQualityIssue {
  description: string;
  check_name: string;
  fingerprint: string;
  severity: 'info' | 'minor' | 'major' | 'critical' | 'blocker';
  location: { path: string; lines: { begin: number } };
}

export function formatGitlab(raw: Report, ctx: FormatContext = {}): string {
  const report = escapeControlsDeep(raw);
  const repoFile = ctx.repositoryFile ?? ((f: string) => f);
  const absolute = ctx.absoluteFile ?? ((f: string) => f);
  const seen = new Map<string, number>();
  const issues: CodeQualityIssue[] = reportFindings(report).map((f) => {
    const rel = repoFile(f.file);
    // A fingerprint that survives moved lines: design, rule and subject; a counter keeps
    // two findings of the same kind apart.
    const base = [f.design ?? f.file, f.ruleId, f.subject].join('|');
    const n = seen.get(base) ?? 0;
    seen.set(base, n + 1);
    return {
      description: findingText(f, rel === null ? absolute(f.file) : null),
      check_name: f.ruleId,
      fingerprint: createHash('sha256').update(n ? `${base}|${n}` : base).digest('hex'),
      severity: f.severity === 'error' ? (f.ruleId.startsWith('rule/') ? 'major' : 'critical') : 'minor',
      location: { path: rel ?? absolute(f.file), lines: { begin: f.line ?? 1 } },
    };
  });
  return `${JSON.stringify(issues, null, 2)}\n`;
}
