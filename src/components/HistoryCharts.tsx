import { Bar, BarChart, CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { Status, TrendPoint } from '../api/types';
import { pct, shortCommit } from './format';
import { SERIES, axis, dayFmt } from './chartStyle';

/** One run on the branch history charts: the API's trend point, with what the charts add. */
export interface HistoryPoint extends TrendPoint {
  /** min_utilization the run was checked against, when one was in force. */
  floor?: number | null;
  message?: string | null;
  author?: string | null;
}

/** The registers of one design over the same runs (null where the run lacks it). */
export interface DesignSeries {
  name: string;
  values: (number | null)[];
}

const verdictColor: Record<Status, string> = { pass: '#1d7a5c', fail: '#b4232c', error: '#8d2f99' };

/** A dot in the verdict's own shape (not colour alone) that opens its run. */
function VerdictDot(props: { cx?: number; cy?: number; payload?: { point?: HistoryPoint }; onOpen?: (id: number) => void }) {
  const { cx, cy, payload, onOpen } = props;
  const p = payload?.point;
  if (cx === undefined || cy === undefined || !p || Number.isNaN(cy)) return <g />;
  const c = verdictColor[p.verdict];
  const shape =
    p.verdict === 'fail' ? (
      <path d={`M${cx} ${cy - 5}L${cx + 5} ${cy}L${cx} ${cy + 5}L${cx - 5} ${cy}Z`} fill={c} stroke="#fff" />
    ) : p.verdict === 'error' ? (
      <rect x={cx - 4} y={cy - 4} width={8} height={8} fill={c} stroke="#fff" />
    ) : (
      <circle cx={cx} cy={cy} r={4} fill={c} stroke="#fff" />
    );
  return (
    <g data-run={p.runId} style={{ cursor: onOpen ? 'pointer' : undefined }} onClick={onOpen ? () => onOpen(p.runId) : undefined}>
      {/* A larger transparent target than the dot itself. */}
      <circle cx={cx} cy={cy} r={9} fill="transparent" />
      {shape}
    </g>
  );
}

function ChartCard({ title, summary, legend, children }: { title: string; summary: string; legend?: React.ReactNode; children: React.ReactElement }) {
  return (
    <figure className="rounded-xl border border-ink-200 bg-white p-4" aria-label={`${title}: ${summary}`}>
      <figcaption className="mb-2 flex items-baseline justify-between gap-2">
        <span className="text-sm font-bold text-ink-900">{title}</span>
        <span className="text-xs text-ink-600">{summary}</span>
      </figcaption>
      {/* The numbers are in the table of runs below, with links; the dots here are a shortcut for the mouse. */}
      <div className="h-44" aria-hidden="true">
        <ResponsiveContainer width="100%" height="100%">
          {children}
        </ResponsiveContainer>
      </div>
      {legend}
    </figure>
  );
}

function lastAndFirst(values: (number | null)[], f: (v: number) => string): string {
  const v = values.filter((x): x is number => x !== null);
  if (!v.length) return 'no values';
  return v.length === 1 ? f(v[0]) : `${f(v[0])} → ${f(v[v.length - 1])}`;
}

function LegendLine({ color, dash, label }: { color: string; dash?: string; label: string }) {
  return (
    <li className="inline-flex items-center gap-1.5">
      <svg width="22" height="8" aria-hidden="true">
        <line x1="1" y1="4" x2="21" y2="4" stroke={color} strokeWidth="2" strokeDasharray={dash} />
      </svg>
      {label}
    </li>
  );
}

/**
 * Utilization (with the rule floor the runs were checked against), registers per design and
 * violations over the runs of a branch, on a time axis, oldest on the left; the base branch's runs
 * of the same period as a thin grey overlay. Each dot opens its run.
 */
export function HistoryCharts({
  points,
  base,
  registers,
  onOpenRun,
}: {
  points: HistoryPoint[];
  base?: { name: string; points: HistoryPoint[] } | null;
  /** Registers per design; without it, the register minimum of `points`. */
  registers?: DesignSeries[];
  onOpenRun?: (runId: number) => void;
}) {
  const t0 = points.length ? Date.parse(points[0]!.createdAt) : 0;
  // The overlay keeps to the branch's own period, and one run of the base before it as the start.
  const basePoints = (base?.points ?? []).filter((p, i, all) => Date.parse(p.createdAt) >= t0 || (all[i + 1] && Date.parse(all[i + 1]!.createdAt) >= t0));
  type Row = Record<string, number | null | HistoryPoint | undefined> & { t: number; point?: HistoryPoint };
  const rows: Row[] = [
    ...points.map((p, i) => {
      const row: Row = { t: Date.parse(p.createdAt), point: p, utilizationPct: p.utilization === null ? null : p.utilization * 100, floorPct: p.floor == null ? null : p.floor * 100, violations: p.violations, registerMinimum: p.registerMinimum };
      registers?.forEach((s, k) => (row[`reg${k}`] = s.values[i] ?? null));
      return row;
    }),
    ...basePoints.map((p) => ({ t: Date.parse(p.createdAt), baseUtilizationPct: p.utilization === null ? null : p.utilization * 100, baseRegisters: p.registerMinimum }) as Row),
  ].sort((a, b) => a.t - b.t);
  const floors = points.map((p) => p.floor).filter((f): f is number => f != null);
  const floorText = floors.length ? ` · floor ${pct(floors[floors.length - 1])}` : '';
  const tooltipLabel = (_: unknown, payload: readonly { payload?: Row }[]) => {
    const p = payload?.find((x) => x.payload?.point)?.payload?.point;
    if (!p) return base ? `${base.name}` : '';
    return `${shortCommit(p.commit)} · ${p.verdict}${p.message ? ` · ${p.message}` : ''}`;
  };
  const xAxis = <XAxis dataKey="t" type="number" scale="time" domain={['dataMin', 'dataMax']} tick={axis} tickLine={false} minTickGap={24} tickFormatter={(v: number) => dayFmt.format(new Date(v))} />;
  const dot = <VerdictDot onOpen={onOpenRun} />;
  const series = registers && registers.length ? registers : null;
  return (
    <div className="grid gap-4 lg:grid-cols-3" data-testid="history-charts">
      <ChartCard
        title="Utilization"
        summary={`${lastAndFirst(points.map((p) => p.utilization), (v) => pct(v))}${floorText}`}
        legend={
          <ul className="mt-2 flex flex-wrap gap-x-3 gap-y-1 text-xs text-ink-600">
            <LegendLine color="#353b62" label="this branch" />
            {floors.length > 0 && <LegendLine color="#b4232c" dash="5 3" label="rule floor (min_utilization)" />}
            {base && basePoints.length > 0 && <LegendLine color="#9aa0bf" label={base.name} />}
          </ul>
        }
      >
        <LineChart accessibilityLayer={false} data={rows} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          {xAxis}
          <YAxis tick={axis} tickLine={false} axisLine={false} domain={[0, 100]} unit="%" />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v, name) => [`${Number(v).toFixed(1)}%`, name === 'floorPct' ? 'floor' : name === 'baseUtilizationPct' ? base?.name ?? 'base' : 'utilization']} isAnimationActive={false} />
          {base && <Line type="monotone" dataKey="baseUtilizationPct" stroke="#9aa0bf" strokeWidth={1.5} dot={false} isAnimationActive={false} connectNulls />}
          <Line type="stepAfter" dataKey="floorPct" stroke="#b4232c" strokeWidth={1.5} strokeDasharray="5 3" dot={false} isAnimationActive={false} connectNulls />
          <Line type="monotone" dataKey="utilizationPct" stroke="#353b62" strokeWidth={2} dot={dot} activeDot={false} isAnimationActive={false} connectNulls />
        </LineChart>
      </ChartCard>
      <ChartCard
        title={series ? 'Registers per design' : 'Register minimum'}
        summary={series ? `${series.length} design${series.length === 1 ? '' : 's'}` : lastAndFirst(points.map((p) => p.registerMinimum), String)}
        legend={
          <ul className="mt-2 flex flex-wrap gap-x-3 gap-y-1 text-xs text-ink-600">
            {series ? series.map((s, k) => <LegendLine key={s.name} color={SERIES[k % SERIES.length]!.color} dash={SERIES[k % SERIES.length]!.dash} label={s.name} />) : <LegendLine color="#c4551a" label="this branch" />}
            {base && basePoints.length > 0 && !series && <LegendLine color="#9aa0bf" label={base.name} />}
          </ul>
        }
      >
        <LineChart accessibilityLayer={false} data={rows} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          {xAxis}
          <YAxis tick={axis} tickLine={false} axisLine={false} allowDecimals={false} />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v, name) => [v, typeof name === 'string' && name.startsWith('reg') ? series?.[Number(name.slice(3))]?.name ?? name : name === 'baseRegisters' ? base?.name ?? 'base' : 'registers']} isAnimationActive={false} />
          {base && !series && <Line type="stepAfter" dataKey="baseRegisters" stroke="#9aa0bf" strokeWidth={1.5} dot={false} isAnimationActive={false} connectNulls />}
          {series
            ? series.map((s, k) => (
                <Line key={s.name} type="stepAfter" dataKey={`reg${k}`} name={`reg${k}`} stroke={SERIES[k % SERIES.length]!.color} strokeDasharray={SERIES[k % SERIES.length]!.dash} strokeWidth={2} dot={dot} activeDot={false} isAnimationActive={false} connectNulls />
              ))
            : <Line type="stepAfter" dataKey="registerMinimum" stroke="#c4551a" strokeWidth={2} dot={dot} activeDot={false} isAnimationActive={false} connectNulls />}
        </LineChart>
      </ChartCard>
      <ChartCard title="Violations" summary={lastAndFirst(points.map((p) => p.violations), String)}>
        <BarChart accessibilityLayer={false} data={rows.filter((r) => r.point)} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          {xAxis}
          <YAxis tick={axis} tickLine={false} axisLine={false} allowDecimals={false} />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v) => [v, 'violations']} isAnimationActive={false} />
          <Bar
            dataKey="violations"
            fill="#b4232c"
            radius={[3, 3, 0, 0]}
            maxBarSize={14}
            isAnimationActive={false}
            cursor={onOpenRun ? 'pointer' : undefined}
            onClick={(entry: unknown) => {
              const p = (entry as { payload?: Row }).payload?.point;
              if (p && onOpenRun) onOpenRun(p.runId);
            }}
          />
        </BarChart>
      </ChartCard>
    </div>
  );
}
