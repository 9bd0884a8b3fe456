// The terminal report: one verdict line per design, then only what needs acting on.
// Long lists are cut ("... and N more") so a design of thousands of nodes stays readable.
import { Chalk, type ChalkInstance } from 'chalk';
import { countStatuses } from '../../shared/report/report';
import type { DesignReport, EdgeResult, Report, Status } from '../../shared/types';
import { diagnosticLine, fraction, pct, plural, type FormatContext } from './common';
import { escapeControls, escapeControlsDeep } from './escape';

const MAX_EDGES = 8;
const MAX_MOVES = 12;
const MAX_LOOP = 12;
const MAX_VIOLATIONS = 10;
const MAX_DIAGNOSTICS = 50;

const NO_COLOR = new Chalk({ level: 0 });

export function formatText(raw: Report, ctx: FormatContext = {}): string {
  // Ids, names and paths come from files: their control characters must not reach the terminal.
  const report = escapeControlsDeep(raw);
  const c = ctx.color ?? NO_COLOR;
  const display = ctx.displayFile ?? ((f: string) => f);
  const show = (f: string) => escapeControls(display(f));
  const lines: string[] = [];
  for (const d of report.designs) {
    if (ctx.quiet && d.status === 'pass') continue;
    lines.push(...designLines(d, c, show(d.file), !!ctx.quiet));
  }
  const counts = countStatuses(report.designs);
  if (!ctx.quiet || report.verdict !== 'pass') {
    if (lines.length > 0) lines.push('');
    if (!ctx.quiet) lines.push(c.dim(`rules: ${rulesLine(report)}`));
    const parts = [`${counts.pass} pass`];
    if (counts.fail) parts.push(c.red(`${counts.fail} fail`));
    if (counts.error) parts.push(c.red.bold(`${counts.error} error`));
    lines.push(`${plural(report.designs.length, 'design')} checked: ${parts.join(', ')} -> ${statusWord(report.verdict, c)}`);
  }
  return lines.length ? `${lines.join('\n')}\n` : '';
}

function statusWord(s: Status, c: ChalkInstance): string {
  if (s === 'pass') return c.green.bold('PASS');
  if (s === 'fail') return c.red.bold('FAIL');
  return c.bgRed.white.bold('ERROR');
}

function rulesLine(report: Report): string {
  const parts: string[] = [];
  for (const [name, r] of Object.entries(report.rules)) {
    if (r) parts.push(`${name}=${String(r.value)} (${r.source})`);
  }
  return parts.length ? parts.join(', ') : 'none';
}

function verdictLine(d: DesignReport, c: ChalkInstance, file: string): string {
  // PASS and FAIL get one space more than ERROR so the names line up.
  const pad = d.status === 'error' ? '' : ' ';
  const head = `${statusWord(d.status, c)}${pad} ${c.bold(d.name ?? '(unnamed)')}  ${c.dim(file)}`;
  if (d.status === 'error' || d.factor == null) return head;
  const facts: string[] = [`N=${d.factor}`];
  if (d.utilization) facts.push(`util ${pct(d.utilization.overall)}`);
  facts.push(d.registers ? `regs ${d.registers.minimum}` : 'regs -');
  if (d.iterationBound) facts.push(`bound ${fraction(d.iterationBound.numerator, d.iterationBound.denominator)}`);
  if (d.samplePeriodNs != null) facts.push(`period ${round(d.samplePeriodNs)} ns`);
  if (d.retiming?.needed && d.retiming.feasible && d.retiming.applied !== false) facts.push(c.yellow('retimed'));
  return `${head}  ${facts.join('  ')}`;
}

function designLines(d: DesignReport, c: ChalkInstance, file: string, quiet: boolean): string[] {
  const out: string[] = [verdictLine(d, c, file)];
  const ind = '    ';

  if (d.status !== 'error' && d.edges && d.retiming) {
    const negatives: EdgeResult[] = d.edges.filter((e) => e.foldedDelay !== null && e.foldedDelay < 0);
    const r = d.retiming;
    if (negatives.length > 0) {
      out.push(`  ${c.yellow(`${plural(negatives.length, 'edge')} with a negative folded delay`)} (of ${d.edges.length}):`);
      for (const e of negatives.slice(0, MAX_EDGES)) {
        let fix: string;
        if (r.applied === false) {
          fix = 'not retimed (negative_delays: fail)';
        } else if (r.feasible && e.retimedFoldedDelay !== null) {
          fix = `retimed: delays ${e.delays} -> ${e.retimedDelays}, folded ${e.retimedFoldedDelay}`;
        } else if (r.conflict && r.conflict.conflictingEdges.some((x) => x.from === e.from && x.to === e.to)) {
          fix = c.red('on the loop that cannot be retimed (below)');
        } else {
          fix = 'no retiming exists for this plan (one blocking loop is shown below)';
        }
        out.push(`${ind}${e.from} -> ${e.to}  delays ${e.delays}  folded ${c.red(String(e.foldedDelay))}  ${fix}`);
      }
      if (negatives.length > MAX_EDGES) out.push(`${ind}... and ${negatives.length - MAX_EDGES} more`);
    }
    if (r.needed && r.feasible && r.applied !== false) {
      const moved = movedNodes(r.values);
      const latency = r.latencyAdded ? `, adds ${plural(r.latencyAdded, 'iteration')} of latency` : ', no latency added';
      out.push(`  retiming: ${plural(moved.length, 'node')} moved${latency}`);
      if (moved.length > 0) {
        const shown = moved.slice(0, MAX_MOVES).map(([n, v]) => `${n} ${v > 0 ? '+' : ''}${v}`);
        out.push(`${ind}${shown.join(', ')}${moved.length > MAX_MOVES ? `, ... and ${moved.length - MAX_MOVES} more` : ''}`);
      }
    }
    if (!r.feasible && r.conflict) {
      const k = r.conflict;
      const nodes = k.edges.length ? [k.edges[0].from, ...k.edges.map((e) => e.to)] : [];
      const need = k.minFactor !== null ? `; this loop needs N >= ${k.minFactor}, the plan has N=${d.factor}` : '';
      out.push(`  ${c.red('no retiming exists')}: loop ${shortPath(nodes)} (${plural(k.loopDelays, 'delay')}, ${plural(k.loopStages, 'pipeline stage')}${need})`);
      for (const e of k.edges.slice(0, MAX_LOOP)) {
        const bad = e.foldedDelay !== null && e.foldedDelay < 0;
        const fd = e.foldedDelay === null ? 'tap' : bad ? c.red(String(e.foldedDelay)) : String(e.foldedDelay);
        out.push(`${ind}${e.from} -> ${e.to}  delays ${e.delays}  folded ${fd}${e.viaBoundary ? c.dim('  (tied boundary)') : ''}`);
      }
      if (k.edges.length > MAX_LOOP) out.push(`${ind}... and ${k.edges.length - MAX_LOOP} more`);
      for (const s of k.suggestions) out.push(`${ind}fix: ${s}`);
    }
  }

  const violations = d.violations ?? [];
  for (const v of violations.slice(0, MAX_VIOLATIONS)) {
    const where = v.line ? ` ${c.dim(`(${file}:${v.line}:${v.column ?? 1})`)}` : '';
    out.push(`  ${c.red('rule')} ${v.rule}=${v.limit} (${v.source}): ${v.message}${where}`);
  }
  if (violations.length > MAX_VIOLATIONS) out.push(`  ... and ${violations.length - MAX_VIOLATIONS} more violations`);

  const diags = quiet ? d.diagnostics.filter((x) => x.severity === 'error') : d.diagnostics;
  for (const x of diags.slice(0, MAX_DIAGNOSTICS)) {
    const line = diagnosticLine(file, x);
    out.push(`  ${x.severity === 'error' ? c.red(line) : c.yellow(line)}`);
  }
  if (diags.length > MAX_DIAGNOSTICS) out.push(`  ... and ${diags.length - MAX_DIAGNOSTICS} more diagnostics (all of them are in --format json)`);
  return out;
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
