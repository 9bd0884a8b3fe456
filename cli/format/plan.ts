// Output of `pleat plan`: per design a block led by `design NAME  N=n  VERDICT` (as `pleat check`), the units x partitions grid of the plan with
// the pins marked, the metrics with `optimal` or the gap, and what was written; or, when no plan
// exists, why and what would admit one. JSON is `pleat-plan/1` (docs/cli.md).
import { Chalk, type ChalkInstance } from 'chalk';
import type { Diagnostic } from '../../shared/types';
import type { PlanResult } from '../plan/api';
import { diagnosticLine, plural } from './common';

export type PlanStatus = 'optimal' | 'feasible' | 'infeasible' | 'error';

export interface PlanEntry {
  file: string;
  name: string | null;
  status: PlanStatus;
  plan: PlanResult | null;
  diagnostics: Diagnostic[];
  /** Units made and dropped by --units. */
  made: string[];
  dropped: string[];
  /** Where the plan was written (--write, --out), with the 1-based line ranges that changed. */
  written: { file: string; edited: { from: number; to: number; what: string }[] } | null;
  /** A problem of this design that is not a diagnostic of its file (e.g. --units drops a pinned unit). */
  problem?: string;
}

const NO_COLOR = new Chalk({ level: 0 });
const MAX_UNITS = 32;
const MAX_PARTITIONS = 16;
const MAX_CELL = 14;
const MAX_DIAGNOSTICS = 50;

/** Exit code of one entry: 0 plan found, 1 no plan, 2 invalid input. */
export function entryExit(e: PlanEntry): number {
  return e.status === 'error' ? 2 : e.status === 'infeasible' ? 1 : 0;
}

/** Verdict words of a plan block: the same `design NAME  N=n  VERDICT` head as `pleat check`. */
function word(s: PlanStatus, c: ChalkInstance): string {
  if (s === 'optimal') return c.green.bold('plan optimal');
  if (s === 'feasible') return c.yellow.bold('plan feasible');
  if (s === 'infeasible') return c.red.bold('no plan');
  return c.bgRed.white.bold('invalid');
}

function seconds(s: number): string {
  return s < 10 ? `${s.toFixed(2)} s` : `${s.toFixed(1)} s`;
}

function cell(v: string, width: number): string {
  const t = v.length > MAX_CELL ? `${v.slice(0, MAX_CELL - 1)}~` : v;
  return t.padEnd(width);
}

/** Width of the label column, as in the check report. */
const LABEL = 10;

function label(name: string, c: ChalkInstance, paint?: (s: string) => string): string {
  const padded = name.padEnd(LABEL);
  return `  ${paint ? paint(padded) : c.dim(padded)}`;
}

export function planLines(e: PlanEntry, c: ChalkInstance = NO_COLOR): string[] {
  const out: string[] = [];
  const p = e.plan;
  out.push(`design ${c.bold(e.name ?? '(unnamed)')}  N=${p?.factor ?? '?'}  ${word(e.status, c)}`);
  out.push(`${label('file', c)}${e.file}`);
  if (e.status === 'error' || !p) {
    if (e.problem) out.push(`${label('problem', c, c.red)}${e.problem}`);
    for (const d of e.diagnostics.slice(0, MAX_DIAGNOSTICS)) {
      const line = diagnosticLine(e.file, d);
      out.push(`  ${d.severity === 'error' ? c.red(line) : c.yellow(line)}`);
    }
    if (e.diagnostics.length > MAX_DIAGNOSTICS) out.push(`  ... and ${e.diagnostics.length - MAX_DIAGNOSTICS} more diagnostics (all of them are in --format json)`);
    return out;
  }
  const facts = [plural(p.units.length, 'unit')];
  if (p.objective) facts.push(`regs ${p.objective.registers}`, `mux inputs ${p.objective.muxInputs}`, `latency +${p.objective.latencyAdded}`);
  out.push(`${label('figures', c)}${facts.join('  ')}`);

  if (p.status === 'infeasible') {
    for (const r of p.reasons) out.push(`${label('why', c, c.red)}${r}`);
    const s = p.suggestion;
    const tries: string[] = [];
    if (s?.factor !== undefined) tries.push(`--factor ${s.factor}`);
    if (s?.units && Object.keys(s.units).length) tries.push(`--units ${Object.entries(s.units).map(([k, n]) => `${k}=${n}`).join(',')}`);
    if (tries.length) out.push(`${label('try', c, c.cyan)}smallest that admits a plan: ${tries.join('  or  ')}`);
    for (const n of p.notes ?? []) out.push(`${label('note', c)}${c.dim(n)}`);
    out.push(`${label('method', c)}${c.dim(`${p.method}, ${seconds(p.seconds)}`)}`);
    return out;
  }

  // The grid: one row per unit, one column per partition; pinned operations carry a `*`.
  const pins = new Set(p.pins);
  const N = p.factor;
  const cols = Math.min(N, MAX_PARTITIONS);
  const rows = p.units.slice(0, MAX_UNITS);
  const mark = (v: string | null) => (v === null ? '.' : pins.has(v) ? `${v}*` : v);
  let width = Math.max(3, ...[...Array(cols).keys()].map((t) => `p${t}`.length));
  for (const u of rows) for (const v of (p.sets[u.id] ?? []).slice(0, cols)) width = Math.max(width, Math.min(MAX_CELL, mark(v).length));
  const unitWidth = Math.max(4, ...rows.map((u) => u.id.length));
  const kindWidth = Math.max(...rows.map((u) => `${u.kind}/${u.stages}`.length), 4);
  out.push(`${label('grid', c)}${c.dim(`${''.padEnd(unitWidth)}  ${''.padEnd(kindWidth)}  ${[...Array(cols).keys()].map((t) => cell(`p${t}`, width)).join(' ')}${N > cols ? ` ... p${N - 1}` : ''}`.trimEnd())}`);
  for (const u of rows) {
    const list = p.sets[u.id] ?? [];
    const cells = [...Array(cols).keys()].map((t) => {
      const v = list[t] ?? null;
      const text = cell(mark(v), width);
      return v === null ? c.dim(text) : pins.has(v) ? c.cyan(text) : text;
    });
    const busy = list.filter((v) => v !== null).length;
    out.push(`${label('unit', c)}${u.id.padEnd(unitWidth)}  ${c.dim(`${u.kind}/${u.stages}`.padEnd(kindWidth))}  ${cells.join(' ')}${N > cols ? ' ...' : ''}  ${c.dim(`${busy}/${N}`)}`);
  }
  if (p.units.length > rows.length) out.push(`${label('unit', c)}... and ${p.units.length - rows.length} more units (all of them are in --format json)`);
  if (N > cols) out.push(`${label('grid', c)}${c.dim(`partitions p${cols}..p${N - 1} are left out here (all of them are in --format json)`)}`);

  const quality = p.status === 'optimal' ? c.green('optimal') : `gap ${p.gapPercent === null ? 'unknown' : `${round(p.gapPercent)}%`}`;
  const bound = p.bound && Object.keys(p.bound).length ? `; proven bound ${Object.entries(p.bound).map(([k, v]) => `${k} >= ${v}`).join(', ')}` : '';
  out.push(`${label('quality', c)}${quality}${p.status === 'optimal' ? '' : bound}  ${c.dim(`${p.method}, ${seconds(p.seconds)}`)}`);
  if (pins.size) out.push(`${label('pinned', c)}kept where the design placed them, marked *: ${[...pins].slice(0, 12).join(', ')}${pins.size > 12 ? `, ... and ${pins.size - 12} more` : ''}`);
  if (e.made.length || e.dropped.length) {
    const parts: string[] = [];
    if (e.made.length) parts.push(`made ${e.made.join(', ')}`);
    if (e.dropped.length) parts.push(`dropped ${e.dropped.join(', ')}`);
    out.push(`${label('units', c)}${parts.join('; ')}`);
  }
  for (const n of p.notes ?? []) out.push(`${label('note', c)}${c.dim(n)}`);
  if (e.written) {
    const what = e.written.edited.map((x) => `${x.what === 'sets' || x.what === 'factor' ? `folding.${x.what}` : x.what} (${x.from === x.to ? `line ${x.from}` : `lines ${x.from}-${x.to}`})`);
    out.push(`${label('wrote', c, c.green)}${e.written.file}${what.length ? `: ${what.join(', ')}` : ''}`);
  }
  return out;
}

function round(x: number): string {
  return String(Math.round(x * 10) / 10);
}

export function formatPlanText(entries: PlanEntry[], c: ChalkInstance = NO_COLOR): string {
  const lines: string[] = [];
  for (const e of entries) {
    if (lines.length) lines.push('');
    lines.push(...planLines(e, c));
  }
  const counts = { optimal: 0, feasible: 0, infeasible: 0, error: 0 };
  for (const e of entries) counts[e.status]++;
  const parts: string[] = [];
  if (counts.optimal) parts.push(`${counts.optimal} optimal`);
  if (counts.feasible) parts.push(`${counts.feasible} feasible`);
  if (counts.infeasible) parts.push(c.red(`${counts.infeasible} without a plan`));
  if (counts.error) parts.push(c.red.bold(`${counts.error} invalid`));
  lines.push('');
  const found = counts.optimal + counts.feasible;
  lines.push(`plans: ${found} of ${plural(entries.length, 'design')} planned (${parts.join(', ')})`);
  if (found > 0) lines.push(c.dim('A plan is an engineering aid, not a sign-off: `pleat check` verifies the file it goes into.'));
  return `${lines.join('\n')}\n`;
}

export function planJson(entries: PlanEntry[], version: string): string {
  const designs = entries.map((e) => {
    const p = e.plan;
    return {
      file: e.file,
      name: e.name,
      status: e.status,
      factor: p?.factor ?? null,
      units: p?.units ?? null,
      sets: p && p.status !== 'infeasible' ? p.sets : null,
      objective: p?.objective ?? null,
      bound: p?.bound ?? null,
      gapPercent: p?.gapPercent ?? null,
      method: p?.method ?? null,
      seconds: p?.seconds ?? null,
      pins: p?.pins ?? [],
      unitsMade: e.made,
      unitsDropped: e.dropped,
      reasons: p?.reasons ?? (e.problem ? [e.problem] : []),
      suggestion: p?.suggestion ?? null,
      notes: p?.notes ?? [],
      written: e.written,
      diagnostics: e.diagnostics,
    };
  });
  return `${JSON.stringify({ format: 'pleat-plan/1', tool: { name: 'pleat', version }, designs }, null, 2)}\n`;
}
