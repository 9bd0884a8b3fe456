// JUnit XML as CI servers read it (the testsuites/testsuite/testcase layout Jenkins and GitLab
// accept): one testsuite per design file, one testcase for validity and one per rule in force
// (a failure with the engine's fixes, or skipped with the reason when it could not be checked).
import type { DesignReport, Report, RuleName } from '../../shared/types';
import { designFindings } from '../../shared/report/findings';
import { RULE_WARNING_CODES } from '../../shared/report/rules';
import { diagnosticLine, type FormatContext } from './common';
import { escapeControlsDeep } from './escape';

// Characters XML 1.0 does not allow at all (control characters, lone surrogates, U+FFFE/U+FFFF).
const INVALID_XML = /[^\x09\x0A\x0D\x20-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]/gu;

export function xmlText(s: string): string {
  return s.replace(INVALID_XML, '\uFFFD').replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

export function xmlAttr(s: string): string {
  // Newlines and tabs are written as references so attribute normalisation keeps them.
  return xmlText(s).replace(/"/g, '&quot;').replace(/\n/g, '&#10;').replace(/\r/g, '&#13;').replace(/\t/g, '&#9;');
}

function attrs(a: Record<string, string | number>): string {
  return Object.entries(a)
    .map(([k, v]) => ` ${k}="${xmlAttr(String(v))}"`)
    .join('');
}

interface Case {
  name: string;
  time: number;
  outcome: { kind: 'failure' | 'error' | 'skipped'; message: string; type: string; body: string } | null;
  out?: string;
}

function seconds(ms: number | undefined): number {
  return Math.round((ms ?? 0)) / 1000;
}

function casesOf(d: DesignReport, report: Report, ms: number | undefined): Case[] {
  const cases: Case[] = [];
  const errors = d.diagnostics.filter((x) => x.severity === 'error');
  const warnings = d.diagnostics.filter((x) => x.severity === 'warning');
  cases.push({
    name: 'design is valid',
    time: seconds(ms),
    outcome: errors.length
      ? {
          kind: 'error',
          type: errors[0].code,
          message: `${errors.length} error${errors.length === 1 ? '' : 's'}: ${errors[0].message}`,
          body: errors.map((x) => diagnosticLine(d.file, x)).join('\n'),
        }
      : null,
    out: warnings.length ? warnings.map((x) => diagnosticLine(d.file, x)).join('\n') : undefined,
  });
  const findings = designFindings(d);
  for (const [name, rule] of Object.entries(report.rules) as [RuleName, { value: unknown; source: string }][]) {
    if (!rule) continue;
    const title = `rule ${name} = ${String(rule.value)} (${rule.source})`;
    if (d.status === 'error') {
      cases.push({ name: title, time: 0, outcome: { kind: 'skipped', type: 'invalid-design', message: 'not checked: the design file is invalid', body: '' } });
      continue;
    }
    // A rule that could not be checked is neither a pass nor a failure.
    const notChecked = d.diagnostics.find((x) => x.code === RULE_WARNING_CODES.notChecked && x.message.startsWith(`${name} `));
    if (notChecked) {
      cases.push({ name: title, time: 0, outcome: { kind: 'skipped', type: RULE_WARNING_CODES.notChecked, message: notChecked.message, body: '' } });
      continue;
    }
    const broken = findings.filter((f) => f.rule === name);
    cases.push({
      name: title,
      time: 0,
      outcome: broken.length
        ? {
            kind: 'failure',
            type: name,
            message: broken[0].message,
            body: broken.map((f) => `${f.line ? `${d.file}:${f.line}:${f.column ?? 1}: ` : ''}${f.message}${f.fixes.map((x) => `\nfix: ${x}`).join('')}`).join('\n'),
          }
        : null,
    });
  }
  return cases;
}

export function formatJunit(raw: Report, ctx: FormatContext = {}): string {
  // Escaped rather than replaced by U+FFFD, so the log still says which character it was.
  const report = escapeControlsDeep(raw);
  const suites: string[] = [];
  let tests = 0;
  let failures = 0;
  let errors = 0;
  let skipped = 0;
  let total = 0;
  const timestamp = (ctx.startedAt ?? new Date().toISOString()).replace(/\.\d+Z$/, '');
  report.designs.forEach((d, i) => {
    const ms = ctx.timings?.get(d.file);
    const cases = casesOf(d, report, ms);
    const count = (k: string) => cases.filter((c) => c.outcome?.kind === k).length;
    const s = { tests: cases.length, failures: count('failure'), errors: count('error'), skipped: count('skipped') };
    tests += s.tests;
    failures += s.failures;
    errors += s.errors;
    skipped += s.skipped;
    total += seconds(ms);
    const classname = d.name ?? d.file;
    const body: string[] = [];
    body.push(`    <properties>${attrsProp('file', d.file)}${d.name ? attrsProp('design', d.name) : ''}${attrsProp('status', d.status)}</properties>`);
    for (const c of cases) {
      const open = `    <testcase${attrs({ name: c.name, classname, file: d.file, time: c.time })}`;
      const inner: string[] = [];
      if (c.outcome) {
        const o = c.outcome;
        if (o.kind === 'skipped') inner.push(`      <skipped${attrs({ message: o.message })}/>`);
        else inner.push(`      <${o.kind}${attrs({ message: o.message, type: o.type })}>${xmlText(o.body)}</${o.kind}>`);
      }
      body.push(inner.length ? `${open}>\n${inner.join('\n')}\n    </testcase>` : `${open}/>`);
    }
    // Warnings go to the suite's output: the strict JUnit schema has system-out per suite only.
    const out = cases.map((c) => c.out).filter(Boolean).join('\n');
    body.push(out ? `    <system-out>${xmlText(out)}</system-out>` : '    <system-out/>');
    body.push('    <system-err/>');
    suites.push(
      `  <testsuite${attrs({ name: d.file, id: i, tests: s.tests, failures: s.failures, errors: s.errors, skipped: s.skipped, time: seconds(ms), timestamp, hostname: 'localhost', package: 'pleat' })}>\n${body.join('\n')}\n  </testsuite>`,
    );
  });
  const head = `<testsuites${attrs({ name: 'pleat check', tests, failures, errors, skipped, time: Math.round(total * 1000) / 1000 })}>`;
  return `<?xml version="1.0" encoding="UTF-8"?>\n${head}\n${suites.join('\n')}\n</testsuites>\n`;
}

function attrsProp(name: string, value: string): string {
  return `<property${attrs({ name, value })}/>`;
}
