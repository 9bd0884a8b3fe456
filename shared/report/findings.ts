// The findings of a report as one flat list, for every output that lists problems one by one
// (SARIF, the code-quality JSON, Markdown, JUnit, GitHub annotations, baselines): a stable rule
// id per validation code and per rule, its help text, where it is, what would fix it, and the
// key a baseline matches it by (design, rule, edge or unit; never the line, which moves).
import { CODES } from '../design/diagnostics';
import type { Diagnostic, DesignReport, Report, RuleName, Violation } from '../types';

export interface Finding {
  /** `rule/<name>` for a rule in force, the validation code for a diagnostic. */
  ruleId: string;
  severity: 'error' | 'warning';
  design: string | null;
  /** The design file as the report names it (relative to the repository root of the check). */
  file: string;
  line: number | null;
  column: number | null;
  message: string;
  /** What would fix it, in the design's terms (may be empty). */
  fixes: string[];
  /** What the finding is about inside the design: `edge a -> b`, `unit MUL1`, or '' for the design as a whole. */
  subject: string;
  /** For a rule: the measured value (compared by baselines to tell worse from equal). */
  actual?: number | string;
  limit?: number | string;
  rule?: RuleName;
}

export interface RuleHelp {
  id: string;
  /** One line. */
  short: string;
  /** What it means and how to act on it. */
  help: string;
}

const RULE_HELP: Record<RuleName, { short: string; help: string }> = {
  negative_delays: {
    short: 'Every folded delay must be nonnegative, after retiming where the rule allows it.',
    help: 'A negative folded delay means a value is used before the unit that makes it has produced it. Under `retime` retiming may repair it; under `fail` the plan must hold as written. Fix: raise the folding factor, move the operations of the loop to other partitions, or use units with fewer pipeline stages (docs/cli.md, Rules).',
  },
  min_utilization: {
    short: 'The design-wide hardware utilization must reach the minimum.',
    help: 'Utilization is operations / (units x N). Fix: fewer units of a kind (`pleat plan --units`), or another folding factor (`pleat sweep` shows utilization per N) (docs/cli.md, Rules).',
  },
  min_unit_utilization: {
    short: 'Every unit must be busy for at least the minimum share of the partitions.',
    help: 'A unit that is idle most of the time costs area for little work. Fix: move operations onto it, or drop it (`pleat plan --units`) (docs/cli.md, Rules).',
  },
  max_registers: {
    short: 'The lifetime-analysis minimum of registers must not exceed the maximum.',
    help: 'Registers hold values between the partition that produces them and the ones that use them. Fix: `pleat plan --objective registers` for a placement with fewer registers, another folding factor (`pleat sweep`), or a higher limit (docs/cli.md, Rules).',
  },
};

/** Codes the CLI adds to the loader's (docs/cli.md, "Diagnostics added by the CLI"). */
const CLI_CODES: Record<string, string> = {
  'duplicate-design-name': 'Design names must be unique among the files of one check.',
  'file-unreadable': 'The file cannot be read as a design file.',
  'negative-folded-delay': 'Negative folded delays under `negative_delays: warn`: reported, not failing.',
  'rule-not-checked': 'A rule in force could not be checked on this design (no feasible datapath).',
};

/** Every rule id there is: one per rule, one per validation code, one per code the CLI adds. */
export function allRuleIds(): string[] {
  return [...Object.keys(RULE_HELP).map((r) => `rule/${r}`), ...Object.keys(CODES), ...Object.keys(CLI_CODES).filter((c) => !(c in CODES))];
}

/** Help of a rule id, for the rule tables of SARIF and the like. */
export function ruleHelp(ruleId: string): RuleHelp {
  if (ruleId.startsWith('rule/')) {
    const name = ruleId.slice(5) as RuleName;
    const h = RULE_HELP[name];
    if (h) return { id: ruleId, short: h.short, help: h.help };
  }
  const code = (CODES as Record<string, { rule: string }>)[ruleId];
  if (code) return { id: ruleId, short: code.rule, help: `${code.rule} docs/diagnostics.md lists every code with an example fix.` };
  const short = CLI_CODES[ruleId] ?? `Finding ${ruleId}.`;
  return { id: ruleId, short, help: `${short} docs/cli.md describes it.` };
}

function violationSubject(v: Violation, d: DesignReport): string {
  if (v.unit) return `unit ${v.unit}`;
  const p = v.path;
  if (p && p[0] === 'edges' && typeof p[1] === 'number' && d.edges?.[p[1]]) {
    const e = d.edges[p[1]];
    return `edge ${e.from} -> ${e.to}`;
  }
  return '';
}

function violationFixes(v: Violation, d: DesignReport): string[] {
  if (v.rule === 'negative_delays') {
    const s = d.retiming?.conflict?.suggestions ?? [];
    if (s.length) return s;
    if (v.limit === 'fail') return ['Move the operations of each such edge so that its folded delay is nonnegative, or let retiming repair them (negative_delays: retime).'];
    return ['Raise the folding factor or move operations of the loop to other partitions.'];
  }
  if (v.rule === 'min_utilization') return ['Plan on fewer units (`pleat plan --units KIND=COUNT`) or at another folding factor (`pleat sweep --factors ...` shows utilization per N).'];
  if (v.rule === 'min_unit_utilization') return [`Place more operations on ${v.unit ?? 'the unit'}, or drop it (\`pleat plan --units KIND=COUNT\`).`];
  return ['Run `pleat plan --objective registers` for a placement with fewer registers, or try another folding factor (`pleat sweep`).'];
}

function diagnosticSubject(x: Diagnostic): string {
  return x.path && x.path.length ? x.path.map(String).join('.') : '';
}

/** Every finding of one design: broken rules first, then its diagnostics. */
export function designFindings(d: DesignReport): Finding[] {
  const out: Finding[] = [];
  for (const v of d.violations) {
    out.push({
      ruleId: `rule/${v.rule}`,
      severity: 'error',
      design: d.name,
      file: d.file,
      line: v.line ?? null,
      column: v.column ?? null,
      message: `${v.rule}=${v.limit} (${v.source}): ${v.message}`,
      fixes: violationFixes(v, d),
      subject: violationSubject(v, d),
      actual: v.actual,
      limit: v.limit,
      rule: v.rule,
    });
  }
  for (const x of d.diagnostics) {
    out.push({
      ruleId: x.code,
      severity: x.severity,
      design: d.name,
      file: d.file,
      line: x.line,
      column: x.column,
      message: x.message,
      fixes: [],
      subject: diagnosticSubject(x),
    });
  }
  return out;
}

export function reportFindings(report: Report): Finding[] {
  return report.designs.flatMap(designFindings);
}

/** Identity of one finding within a report (design, rule, subject, place, message), to recognise it in another list. */
export function findingKey(f: Finding): string {
  return JSON.stringify([f.design, f.ruleId, f.subject, f.line, f.message]);
}

/** The rule ids that a report's findings use, each once, in first-seen order. */
export function usedRuleIds(findings: Finding[]): string[] {
  return [...new Set(findings.map((f) => f.ruleId))];
}
