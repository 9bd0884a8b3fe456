// Output of `pleat diff`: one block per design that moved, led by `design NAME  VERDICT (was
// VERDICT)`, with one labelled line per quantity of the plan that changed (`was -> now`); then
// the designs that came and went and a closing `moved: ...` line. Same label column as check.
import { Chalk, type ChalkInstance } from 'chalk';
import type { Change, DesignDiff, ReportDiff } from '../../shared/report/diff';
import type { Status } from '../../shared/types';
import { pct, plural } from './common';
import { escapeControlsDeep } from './escape';

const NO_COLOR = new Chalk({ level: 0 });
const LABEL = 10;

function label(name: string, c: ChalkInstance): string {
  return `  ${c.dim(name.padEnd(LABEL))}`;
}

function word(s: Status): string {
  return s === 'pass' ? 'folds' : s === 'fail' ? 'breaks rules' : 'invalid';
}

function show(v: unknown): string {
  return v === null || v === undefined ? '-' : String(v);
}

function units(u: Record<string, number>): string {
  const parts = Object.entries(u).sort(([a], [b]) => (a < b ? -1 : 1)).map(([k, n]) => `${k} ${n}`);
  return parts.length ? parts.join(', ') : '-';
}

/** `was -> now`, coloured by whether the change is for the better. */
function arrow<T>(ch: Change<T>, fmt: (v: T) => string, better: ((a: T, b: T) => boolean) | null, c: ChalkInstance): string {
  const text = `${fmt(ch.before)} -> ${fmt(ch.now)}`;
  if (!better || ch.before === null || ch.now === null) return text;
  return better(ch.before, ch.now) ? c.green(text) : c.red(text);
}

const changed = <T,>(ch: Change<T>) => JSON.stringify(ch.before) !== JSON.stringify(ch.now);

function designLines(d: DesignDiff, c: ChalkInstance): string[] {
  const now = d.status.now === 'fail' ? `breaks ${[...d.rulesBroken.still, ...d.rulesBroken.added].join(',')}` : word(d.status.now);
  const head = `design ${c.bold(d.name)}  ${now}${d.status.before !== d.status.now ? ` (was ${word(d.status.before)})` : ''}`;
  const out = [head];
  if (changed(d.factor)) out.push(`${label('factor', c)}N ${arrow(d.factor, show, null, c)}`);
  if (changed(d.units)) out.push(`${label('units', c)}${units(d.units.before)} -> ${units(d.units.now)}`);
  if (changed(d.registers)) out.push(`${label('registers', c)}${arrow(d.registers, show, (a, b) => (b as number) < (a as number), c)}`);
  if (changed(d.utilization)) out.push(`${label('util', c)}${arrow(d.utilization, (v) => (v === null ? '-' : pct(v)), (a, b) => (b as number) > (a as number), c)}`);
  if (changed(d.negativeEdges)) out.push(`${label('negative', c)}${arrow(d.negativeEdges, show, null, c)} edges with a negative folded delay`);
  if (changed(d.retimable)) {
    const r = (v: boolean | null) => (v === null ? '-' : v ? 'retiming exists' : 'no retiming exists');
    out.push(`${label('loops', c)}${arrow(d.retimable, r, (a, b) => !a && !!b, c)}`);
  }
  if (changed(d.iterationBound)) out.push(`${label('bound', c)}iteration bound ${arrow(d.iterationBound, (v) => v ?? 'no loop', null, c)}`);
  if (changed(d.latencyAdded)) out.push(`${label('latency', c)}${arrow(d.latencyAdded, show, (a, b) => (b as number) < (a as number), c)} iterations added by retiming`);
  if (d.rulesBroken.added.length) out.push(`${label('broken', c)}${c.red(`now breaks ${d.rulesBroken.added.join(', ')}`)}`);
  if (d.rulesBroken.cleared.length) out.push(`${label('mended', c)}${c.green(`no longer breaks ${d.rulesBroken.cleared.join(', ')}`)}`);
  return out;
}

export function formatDiffText(raw: ReportDiff, c: ChalkInstance = NO_COLOR, names: { base: string; now: string } = { base: 'base', now: 'now' }): string {
  const diff = escapeControlsDeep(raw);
  const lines: string[] = [`comparing ${names.base} -> ${names.now}`];
  const moved = diff.designs.filter((d) => d.moved);
  for (const d of moved) lines.push('', ...designLines(d, c));
  for (const a of diff.added) lines.push('', `design ${c.bold(a.name)}  ${word(a.status)}  ${c.cyan('new')}${a.factor !== null ? ` at N=${a.factor}` : ''}`, `${label('file', c)}${a.file}`);
  for (const r of diff.removed) lines.push('', `design ${c.bold(r.name)}  ${c.yellow('gone')} (was ${word(r.status)}${r.factor !== null ? ` at N=${r.factor}` : ''})`, `${label('file', c)}${r.file}`);
  const still = diff.designs.length - moved.length;
  lines.push('');
  const gate = diff.verdict.before === diff.verdict.now ? '' : `; gate ${gateWord(diff.verdict.before)} -> ${gateWord(diff.verdict.now)}`;
  lines.push(`moved: ${plural(moved.length, 'design')}, ${still} as before, ${diff.added.length} new, ${diff.removed.length} gone${gate}`);
  return `${lines.join('\n')}\n`;
}

function gateWord(s: Status): string {
  return s === 'pass' ? 'holds' : s === 'fail' ? 'broken' : 'invalid';
}
