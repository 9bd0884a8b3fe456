// The terminal report, in blocks: one per design, led by `design NAME  N=n  VERDICT`, then one
// labelled line per fact (`  LABEL     ...`), failures first, retiming details after them; a
// closing `gate ...` line. The line shapes are stable for scripts (docs/cli.md, "Text").
// Long lists are cut ("... and N more") so a design of thousands of nodes stays readable.
import { Chalk, type ChalkInstance } from 'chalk';
import type { BaselineOutcome } from '../../shared/report/baseline';
import { designFindings, findingKey } from '../../shared/report/findings';
import { countStatuses } from '../../shared/report/report';
import type { DesignReport, EdgeResult, Report, RuleName, Violation } from '../../shared/types';
import { diagnosticLine, fraction, pct, plural, type FormatContext } from './common';
import { escapeControls, escapeControlsDeep } from './escape';

const MAX_EDGES = 8;
const MAX_MOVES = 12;
const MAX_LOOP = 12;
const MAX_VIOLATIONS = 10;
const MAX_DIAGNOSTICS = 50;
const MAX_NAMED = 3;
/** Width of the label column of a block. */
const LABEL = 10;

const NO_COLOR = new Chalk({ level: 0 });

/** Per-design verdict words: the plan folds, breaks rules, or the file is invalid. */
export function verdictWord(d: Pick<DesignReport, 'status' | 'violations'>): string {
  if (d.status === 'pass') return 'folds';
  if (d.status === 'fail') return `breaks ${brokenRules(d.violations).join(',')}`;
  return 'invalid';
}

/** The rules a design breaks, each once, in the order of its violations. */
export function brokenRules(violations: Violation[]): RuleName[] {
  return [...new Set(violations.map((v) => v.rule))];
}

export function formatText(raw: Report, ctx: FormatContext = {}): string {
  // Ids, names and paths come from files: their control characters must not reach the terminal.
  // Only what the text can print is escaped: the lifetime chart, the allocation and control
  // tables and the schedule are most of a large report's strings and never shown here.
  const cut = raw.designs.map(printable);
  const shown = { ...raw, designs: cut.map((p) => p.design) };
  const report = mayNeedEscapes(shown) ? escapeControlsDeep(shown) : shown;
  const c = ctx.color ?? NO_COLOR;
  const display = ctx.displayFile ?? ((f: string) => f);
  const show = (f: string) => escapeControls(display(f));
  const blocks: string[][] = [];
  const baselinedKeys = new Set((ctx.baseline?.outcome.baselined ?? []).map(findingKey));
  report.designs.forEach((d, i) => {
    if (ctx.quiet && d.status === 'pass') return;
    blocks.push(designLines(d, cut[i].counts, report, c, show(d.file), !!ctx.quiet, baselinedKeys));
  });
  const lines: string[] = [];
  for (const b of blocks) {
    if (lines.length > 0) lines.push('');
    lines.push(...b);
  }
  if (!ctx.quiet || report.verdict !== 'pass') {
    if (lines.length > 0) lines.push('');
    if (!ctx.quiet) lines.push(c.dim(`rules in force: ${rulesLine(report)}`));
    lines.push(gateLine(report, c, ctx.baseline));
  }
  return lines.length ? `${lines.join('\n')}\n` : '';
}

/** Members of a long list serialised in one call by mayNeedEscapes. */
const CHECK_SLICE = 512;

/** JSON text that is ASCII without DEL and without a backslash escape. */
function plainJson(json: string): boolean {
  return Buffer.byteLength(json, 'utf8') === json.length && !json.includes('\u007f') && !json.includes('\\');
}

/**
 * False when no string of `value` (keys included) can hold a character escapeControls changes:
 * its JSON text is ASCII without DEL and without a backslash (JSON.stringify writes every C0
 * control, line breaks and tabs included, as a backslash escape). Native serialisation of a few
 * levels' members and of long lists in slices (no string as long as the report) instead of a
 * walk of every edge's strings; true sends the value to the walk, as before.
 */
function mayNeedEscapes(value: unknown, depth = 0): boolean {
  if (Array.isArray(value)) {
    if (depth < 3 && value.length <= CHECK_SLICE) return value.some((v) => mayNeedEscapes(v, depth + 1));
    for (let i = 0; i < value.length; i += CHECK_SLICE) if (!plainJson(JSON.stringify(value.slice(i, i + CHECK_SLICE)))) return true;
    return false;
  }
  if (depth < 3 && value !== null && typeof value === 'object') {
    const obj = value as Record<string, unknown>;
    for (const k in obj) {
      if (!Object.prototype.hasOwnProperty.call(obj, k)) continue;
      if (!plainJson(JSON.stringify(k)) || mayNeedEscapes(obj[k], depth + 1)) return true;
    }
    return false;
  }
  const json = JSON.stringify(value);
  return json !== undefined && !plainJson(json);
}

/** How long the lists were that printable cut to what the text shows. */
interface ListCounts {
  edges: number;
  negatives: number;
  moved: number;
}

/**
 * A design's report with only what the text prints, so that the escape check and walk cover a
 * few dozen strings, not every edge of a large design: no tables, the first negative edges, the
 * first moved nodes; the counts of the lists cut come beside it.
 */
function printable(d: DesignReport): { design: DesignReport; counts: ListCounts } {
  const { lifetimes, allocation, control, schedule, edges, ...shown } = d;
  const negatives: EdgeResult[] = [];
  let negativeCount = 0;
  for (const e of edges ?? []) {
    if (e.foldedDelay === null || e.foldedDelay >= 0) continue;
    if (negativeCount++ < MAX_EDGES) negatives.push(e);
  }
  const moved = d.retiming ? movedNodes(d.retiming.values) : [];
  const design: DesignReport = { ...shown, ...(edges ? { edges: negatives } : {}) };
  if (d.retiming) design.retiming = { ...d.retiming, values: Object.fromEntries(moved.slice(0, MAX_MOVES)) };
  return { design, counts: { edges: edges?.length ?? 0, negatives: negativeCount, moved: moved.length } };
}

/** `gate holds|broken|invalid: ...`: the verdict of the whole check, naming who broke what. */
export function gateLine(report: Report, c: ChalkInstance = NO_COLOR, baseline?: { file: string; outcome: BaselineOutcome }): string {
  const counts = countStatuses(report.designs);
  const total = report.designs.length;
  const folds = `${counts.pass} of ${plural(total, 'design')} fold${total === 1 ? 's' : ''}`;
  if (baseline && report.verdict !== 'error') {
    const o = baseline.outcome;
    const tally = `${plural(o.baselined.length, 'broken rule')} baselined, ${o.fresh.length} new, ${o.worse.length} worse (${baseline.file})`;
    const bad = [...o.fresh.map((f) => `${f.design ?? f.file} breaks ${f.rule}${f.subject ? ` (${f.subject})` : ''}`), ...o.worse.map((w) => `${w.finding.design ?? w.finding.file} breaks ${w.finding.rule} worse than baselined (${String(w.was.actual)} -> ${String(w.finding.actual)})`)];
    if (bad.length === 0) return `${c.green.bold('gate holds')}: ${folds}; ${tally}`;
    return `${c.red.bold('gate broken')}: ${named(bad)}; ${folds}; ${tally}`;
  }
  if (report.verdict === 'pass') return `${c.green.bold('gate holds')}: ${folds}`;
  const parts: string[] = [];
  const invalid = report.designs.filter((d) => d.status === 'error');
  if (invalid.length) parts.push(`${plural(invalid.length, 'design')} invalid (${named(invalid.map((d) => d.name ?? d.file))})`);
  const failing = report.designs.filter((d) => d.status === 'fail');
  if (failing.length) parts.push(named(failing.map((d) => `${d.name ?? d.file} breaks ${brokenRules(d.violations).join(',')}`)));
  const head = report.verdict === 'error' ? c.bgRed.white.bold('gate invalid') : c.red.bold('gate broken');
  const tail = baseline ? `; ${plural(baseline.outcome.baselined.length, 'broken rule')} baselined (${baseline.file})` : '';
  return `${head}: ${parts.join('; ')}; ${folds}${tail}`;
}



function named(items: string[]): string {
  return items.length <= MAX_NAMED ? items.join(', ') : `${items.slice(0, MAX_NAMED).join(', ')}, ... and ${items.length - MAX_NAMED} more`;
}

function rulesLine(report: Report): string {
  const parts: string[] = [];
  for (const [name, r] of Object.entries(report.rules)) {
    if (r) parts.push(`${name}=${String(r.value)} (${r.source})`);
  }
  return parts.length ? parts.join(', ') : 'none';
}

function label(name: string, c: ChalkInstance, paint?: (s: string) => string): string {
  const padded = name.padEnd(LABEL);
  return `  ${paint ? paint(padded) : c.dim(padded)}`;
}

function headLine(d: DesignReport, c: ChalkInstance): string {
  const name = c.bold(d.name ?? '(unnamed)');
  if (d.status === 'error') {
    const n = d.diagnostics.filter((x) => x.severity === 'error').length;
    return `design ${name}  N=?  ${c.bgRed.white.bold('invalid')}${n ? `: ${plural(n, 'error')}` : ''}`;
  }
  const word = verdictWord(d);
  return `design ${name}  N=${d.factor ?? '?'}  ${d.status === 'pass' ? c.green.bold(word) : c.red.bold(word)}`;
}

function figures(d: DesignReport, c: ChalkInstance): string {
  const facts: string[] = [];
  if (d.utilization) facts.push(`util ${pct(d.utilization.overall)}`);
  facts.push(d.registers ? `regs ${d.registers.minimum}` : 'regs -');
  if (d.iterationBound) facts.push(`bound ${fraction(d.iterationBound.numerator, d.iterationBound.denominator)}`);
  if (d.samplePeriodNs != null) facts.push(`period ${round(d.samplePeriodNs)} ns`);
  if (d.retiming?.needed && d.retiming.feasible && d.retiming.applied !== false) facts.push(c.yellow('retimed'));
  return facts.join('  ');
}

/** `file:line:col` of a place in the design, or the file alone. */
function at(file: string, line: number | null | undefined, column: number | null | undefined): string {
  return line ? `${file}:${line}:${column ?? 1}` : file;
}

function designLines(d: DesignReport, counts: ListCounts, report: Report, c: ChalkInstance, file: string, quiet: boolean, baselined: Set<string>): string[] {
  const out: string[] = [headLine(d, c)];
  out.push(`${label('file', c)}${file}`);
  if (d.status !== 'error' && d.factor != null) out.push(`${label('figures', c)}${figures(d, c)}`);

  // Failures first: the broken rules, the loop that blocks retiming and its fixes, the errors.
  const violations = d.violations ?? [];
  // designFindings lists the violations first, in their order; a baselined one says so.
  const findings = baselined.size ? designFindings(d) : [];
  violations.slice(0, MAX_VIOLATIONS).forEach((v, i) => {
    const place = v.line ? ` at ${at(file, v.line, v.column)}` : '';
    const accepted = baselined.size > 0 && baselined.has(findingKey(findings[i]));
    out.push(`${accepted ? label('baselined', c, c.yellow) : label('broken', c, c.red)}${v.rule}=${v.limit} (${v.source})${place}: ${v.message}`);
  });
  if (violations.length > MAX_VIOLATIONS) out.push(`${label('broken', c, c.red)}... and ${violations.length - MAX_VIOLATIONS} more violations`);

  const r = d.status !== 'error' ? d.retiming : null;
  if (r && !r.feasible && r.conflict) {
    const k = r.conflict;
    const nodes = k.edges.length ? [k.edges[0].from, ...k.edges.map((e) => e.to)] : [];
    const need = k.minFactor !== null ? `; this loop needs N >= ${k.minFactor}, the plan has N=${d.factor}` : '';
    out.push(`${label('loop', c, c.red)}no retiming exists: loop ${shortPath(nodes)} (${plural(k.loopDelays, 'delay')}, ${plural(k.loopStages, 'pipeline stage')}${need})`);
    for (const e of k.edges.slice(0, MAX_LOOP)) {
      const bad = e.foldedDelay !== null && e.foldedDelay < 0;
      const fd = e.foldedDelay === null ? 'tap' : bad ? c.red(String(e.foldedDelay)) : String(e.foldedDelay);
      const where = e.viaBoundary ? '(tied boundary)' : at(file, e.line, e.column);
      out.push(`${label('on-loop', c)}${where}  ${e.from} -> ${e.to}  delays ${e.delays}  folded ${fd}`);
    }
    if (k.edges.length > MAX_LOOP) out.push(`${label('on-loop', c)}... and ${k.edges.length - MAX_LOOP} more`);
    for (const s of k.suggestions) out.push(`${label('fix', c, c.cyan)}${s}`);
  }

  const diags = quiet ? d.diagnostics.filter((x) => x.severity === 'error') : d.diagnostics;
  const ordered = [...diags.filter((x) => x.severity === 'error'), ...diags.filter((x) => x.severity !== 'error')];
  const diagLines: string[] = [];
  for (const x of ordered.slice(0, MAX_DIAGNOSTICS)) {
    const line = diagnosticLine(file, x);
    diagLines.push(`  ${x.severity === 'error' ? c.red(line) : c.yellow(line)}`);
  }
  if (ordered.length > MAX_DIAGNOSTICS) diagLines.push(`  ... and ${ordered.length - MAX_DIAGNOSTICS} more diagnostics (all of them are in --format json)`);
  const errorCount = Math.min(MAX_DIAGNOSTICS, ordered.filter((x) => x.severity === 'error').length);
  out.push(...diagLines.slice(0, errorCount));

  // Then the details: the negative folded delays and what became of each, the retiming.
  if (r && d.edges) {
    // d.edges holds the first negative edges only (printable).
    const negatives = d.edges;
    if (counts.negatives > 0) {
      out.push(`${label('negative', c, c.yellow)}${plural(counts.negatives, 'edge')} of ${counts.edges} with a negative folded delay`);
      for (const e of negatives) {
        let fix: string;
        if (r.applied === false) {
          fix = 'not retimed (negative_delays: fail)';
        } else if (r.feasible && e.retimedFoldedDelay !== null) {
          fix = `retimed: delays ${e.delays} -> ${e.retimedDelays}, folded ${e.retimedFoldedDelay}`;
        } else if (r.conflict && r.conflict.conflictingEdges.some((x) => x.from === e.from && x.to === e.to)) {
          fix = c.red('on the loop that cannot be retimed');
        } else {
          fix = 'no retiming exists for this plan';
        }
        out.push(`${label('edge', c)}${at(file, e.line, e.column)}  ${e.from} -> ${e.to}  delays ${e.delays}  folded ${c.red(String(e.foldedDelay))}  ${fix}`);
      }
      if (counts.negatives > MAX_EDGES) out.push(`${label('edge', c)}... and ${counts.negatives - MAX_EDGES} more`);
    }
    if (r.needed && r.feasible && r.applied !== false) {
      // r.values holds the first moved nodes only (printable).
      const moved = movedNodes(r.values);
      const latency = r.latencyAdded ? `, adds ${plural(r.latencyAdded, 'iteration')} of latency` : ', no latency added';
      out.push(`${label('retiming', c)}${plural(counts.moved, 'node')} moved${latency}`);
      if (moved.length > 0) {
        const shown = moved.map(([n, v]) => `${n} ${v > 0 ? '+' : ''}${v}`);
        out.push(`${label('moved', c)}${shown.join(', ')}${counts.moved > MAX_MOVES ? `, ... and ${counts.moved - MAX_MOVES} more` : ''}`);
      }
      // Each output's latency, and the output that sets the shared retiming of the outputs.
      const ol = d.outputLatency;
      if (ol) {
        const shown = ol.outputs.slice(0, MAX_MOVES).map((o) => `${o.node} ${o.latency} (${o.mode === 'slot' ? `slot ${o.cycle}` : `tap, cycle ${o.cycle}`}${o.needs !== o.latency ? `, needs ${o.needs}` : ''})`);
        out.push(`${label('latency', c)}${shown.join(', ')}${ol.outputs.length > MAX_MOVES ? `, ... and ${ol.outputs.length - MAX_MOVES} more` : ''}`);
        if (ol.forcedBy) {
          const f = ol.forcedBy;
          const lower = f.options.length ? `; to lower it: ${f.options.join('; or ')}` : '';
          out.push(`${label('forced', c)}${f.node} sets the outputs' retiming to ${ol.shared}, ${plural(f.by, 'iteration')} above what the others need${lower}`);
        }
      }
    }
  }
  out.push(...diagLines.slice(errorCount));

  if (d.status !== 'error') {
    const rules = ruleStates(d, report);
    if (rules) out.push(`${label('rules', c)}${rules}`);
  }
  return out;
}

/** `held a, b; broken c; not checked d` for the rules in force on one design. */
function ruleStates(d: DesignReport, report: Report): string {
  const broken = new Set(brokenRules(d.violations));
  const notChecked = new Set(d.diagnostics.filter((x) => x.code === 'rule-not-checked').map((x) => x.message.split(' ')[0]));
  const held: string[] = [];
  const notHeld: string[] = [];
  const unchecked: string[] = [];
  for (const [name, r] of Object.entries(report.rules)) {
    if (!r) continue;
    const item = `${name}=${String(r.value)}`;
    if (broken.has(name as RuleName)) notHeld.push(item);
    else if (notChecked.has(name)) unchecked.push(item);
    else held.push(item);
  }
  const parts: string[] = [];
  if (held.length) parts.push(`held ${held.join(', ')}`);
  if (notHeld.length) parts.push(`broken ${notHeld.join(', ')}`);
  if (unchecked.length) parts.push(`not checked ${unchecked.join(', ')}`);
  return parts.join('; ');
}

/** Nodes with a nonzero retiming value, in the engine's node order. */
function movedNodes(values: Record<string, number>): [string, number][] {
  const moved: [string, number][] = [];
  // Object.keys gives internalised keys, so the lookups stay cheap on maps of 100,000 nodes.
  for (const id of Object.keys(values)) {
    const v = values[id];
    if (v) moved.push([id, v]);
  }
  return moved;
}

function shortPath(nodes: string[]): string {
  if (nodes.length <= 10) return nodes.join(' -> ');
  return `${nodes.slice(0, 5).join(' -> ')} -> ... -> ${nodes.slice(-3).join(' -> ')}`;
}

function round(x: number): string {
  return String(Math.round(x * 1000) / 1000);
}
