// Output of `pleat sweep`: one row per folding factor (units per kind, utilization, registers,
// multiplexer inputs, latency, sample period, optimal or gap), the Pareto front over
// (units, registers, sample period) marked. Text table, JSON `pleat-sweep/1`, CSV (RFC 4180).
import { Chalk, type ChalkInstance } from 'chalk';
import type { SweepRow } from '../plan/api';
import { pct } from './common';

const NO_COLOR = new Chalk({ level: 0 });

export interface SweepOutput {
  file: string;
  name: string;
  clockNs: number | null;
  kinds: string[];
  rows: SweepRow[];
}

function quality(r: SweepRow): string {
  const p = r.plan;
  if (p.status === 'infeasible') return 'no plan';
  if (p.status === 'optimal') return 'optimal';
  return p.gapPercent === null ? 'gap ?' : `gap ${Math.round(p.gapPercent * 10) / 10}%`;
}

function total(units: Record<string, number>): number {
  return Object.values(units).reduce((a, b) => a + b, 0);
}

function num(x: number): string {
  return String(Math.round(x * 1000) / 1000);
}

export function formatSweepText(s: SweepOutput, c: ChalkInstance = NO_COLOR): string {
  const head = ['N', ...s.kinds, 'util', 'regs', 'mux', 'lat', s.clockNs !== null ? 'period ns' : 'period', 'plan', ''];
  const body = s.rows.map((r) => {
    const m = r.plan.objective;
    return [
      String(r.factor),
      ...s.kinds.map((k) => String(r.units[k] ?? 0)),
      r.utilization === null ? '-' : pct(r.utilization),
      m ? String(m.registers) : '-',
      m ? String(m.muxInputs) : '-',
      m ? `+${m.latencyAdded}` : '-',
      r.samplePeriodNs === null ? '-' : num(r.samplePeriodNs),
      quality(r),
      r.pareto ? 'pareto' : '',
    ];
  });
  const widths = head.map((h, i) => Math.max(h.length, ...body.map((row) => row[i].length)));
  // Numbers right-aligned, words left-aligned.
  const right = (i: number) => i < head.length - 2;
  const fmt = (row: string[]) => row.map((v, i) => (right(i) ? v.padStart(widths[i]) : v.padEnd(widths[i]))).join('  ').trimEnd();
  const lines = [`${c.bold(s.name)}  ${c.dim(s.file)}  units per kind, best plan per folding factor N`, c.dim(fmt(head))];
  s.rows.forEach((r, i) => {
    const line = fmt(body[i]);
    lines.push(r.plan.status === 'infeasible' ? c.dim(line) : r.pareto ? c.green(line) : line);
  });
  const front = s.rows.filter((r) => r.pareto).map((r) => r.factor);
  lines.push('');
  lines.push(front.length ? `Pareto front over (units, registers, sample period): N = ${front.join(', ')}` : c.red('no folding factor in the range admits a plan'));
  return `${lines.join('\n')}\n`;
}

export function sweepJson(s: SweepOutput, version: string): string {
  const rows = s.rows.map((r) => ({
    factor: r.factor,
    units: r.units,
    unitsTotal: total(r.units),
    status: r.plan.status,
    utilization: r.utilization,
    registers: r.plan.objective?.registers ?? null,
    muxInputs: r.plan.objective?.muxInputs ?? null,
    latencyAdded: r.plan.objective?.latencyAdded ?? null,
    samplePeriodNs: r.samplePeriodNs,
    gapPercent: r.plan.gapPercent,
    method: r.plan.method,
    seconds: r.plan.seconds,
    pareto: r.pareto,
    sets: r.plan.status === 'infeasible' ? null : r.plan.sets,
    unitList: r.plan.units,
    reasons: r.plan.reasons,
  }));
  return `${JSON.stringify({ format: 'pleat-sweep/1', tool: { name: 'pleat', version }, file: s.file, name: s.name, clockNs: s.clockNs, kinds: s.kinds, rows }, null, 2)}\n`;
}

/** A CSV field, quoted when it holds a comma, a quote or a line break (RFC 4180). */
function field(v: string | number | null | boolean): string {
  const t = v === null ? '' : String(v);
  return /[",\r\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t;
}

export function sweepCsv(s: SweepOutput): string {
  const head = ['factor', ...s.kinds.map((k) => `units_${k}`), 'units_total', 'status', 'utilization', 'registers', 'mux_inputs', 'latency_added', 'sample_period_ns', 'gap_percent', 'method', 'seconds', 'pareto'];
  const lines = [head.join(',')];
  for (const r of s.rows) {
    const m = r.plan.objective;
    lines.push(
      [
        r.factor,
        ...s.kinds.map((k) => r.units[k] ?? 0),
        total(r.units),
        r.plan.status,
        r.utilization === null ? null : Math.round(r.utilization * 1e6) / 1e6,
        m?.registers ?? null,
        m?.muxInputs ?? null,
        m?.latencyAdded ?? null,
        r.samplePeriodNs,
        r.plan.gapPercent,
        r.plan.method,
        Math.round(r.plan.seconds * 1000) / 1000,
        r.pareto,
      ]
        .map(field)
        .join(','),
    );
  }
  return `${lines.join('\r\n')}\r\n`;
}
