import { Bar, BarChart, CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { TrendPoint } from '../api/types';
import type { Status } from '../../shared/types';
import { pct, shortCommit } from './format';

/** One run on the branch history charts: the trend point the branches API returns. */
export type HistoryPoint = TrendPoint;

const axis = { fontSize: 11, fill: '#4b5280' };
const verdictColor: Record<Status, string> = { pass: '#1d7a5c', fail: '#b4232c', error: '#8d2f99' };

/** A dot in the verdict's own shape, so the charts do not rely on colour either. */
function VerdictDot(props: { cx?: number; cy?: number; payload?: HistoryPoint }) {
  const { cx, cy, payload } = props;
  if (cx === undefined || cy === undefined || !payload || Number.isNaN(cy)) return <g />;
  const c = verdictColor[payload.verdict];
  if (payload.verdict === 'fail') return <path d={`M${cx} ${cy - 5}L${cx + 5} ${cy}L${cx} ${cy + 5}L${cx - 5} ${cy}Z`} fill={c} stroke="#fff" />;
  if (payload.verdict === 'error') return <rect x={cx - 4} y={cy - 4} width={8} height={8} fill={c} stroke="#fff" />;
  return <circle cx={cx} cy={cy} r={4} fill={c} stroke="#fff" />;
}

function ChartCard({ title, summary, children }: { title: string; summary: string; children: React.ReactElement }) {
  return (
    <figure className="rounded-xl border border-ink-200 bg-white p-4" aria-label={`${title}: ${summary}`}>
      <figcaption className="mb-2 flex items-baseline justify-between gap-2">
        <span className="text-sm font-bold text-ink-900">{title}</span>
        <span className="text-xs text-ink-600">{summary}</span>
      </figcaption>
      <div className="h-44" aria-hidden="true">
        <ResponsiveContainer width="100%" height="100%">
          {children}
        </ResponsiveContainer>
      </div>
    </figure>
  );
}

function lastAndFirst(values: (number | null)[], f: (v: number) => string): string {
  const v = values.filter((x): x is number => x !== null);
  if (!v.length) return 'no values';
  return v.length === 1 ? f(v[0]) : `${f(v[0])} → ${f(v[v.length - 1])}`;
}

/** Utilization, register minimum and violations over the commits of a branch, oldest on the left. */
export function HistoryCharts({ points }: { points: HistoryPoint[] }) {
  const data = points.map((p) => ({ ...p, label: shortCommit(p.commit), utilizationPct: p.utilization === null ? null : p.utilization * 100 }));
  const tooltipLabel = (_: unknown, payload: readonly { payload?: HistoryPoint }[]) => {
    const p = payload?.[0]?.payload;
    return p ? `${shortCommit(p.commit)} · ${p.verdict}` : '';
  };
  return (
    <div className="grid gap-4 lg:grid-cols-3">
      <ChartCard title="Utilization" summary={lastAndFirst(points.map((p) => p.utilization), (v) => pct(v))}>
        <LineChart accessibilityLayer={false} data={data} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          <XAxis dataKey="label" tick={axis} tickLine={false} minTickGap={16} />
          <YAxis tick={axis} tickLine={false} axisLine={false} domain={[0, 100]} unit="%" />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v) => [`${Number(v).toFixed(1)}%`, 'utilization']} isAnimationActive={false} />
          <Line type="monotone" dataKey="utilizationPct" stroke="#353b62" strokeWidth={2} dot={<VerdictDot />} isAnimationActive={false} connectNulls />
        </LineChart>
      </ChartCard>
      <ChartCard title="Register minimum" summary={lastAndFirst(points.map((p) => p.registerMinimum), String)}>
        <LineChart accessibilityLayer={false} data={data} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          <XAxis dataKey="label" tick={axis} tickLine={false} minTickGap={16} />
          <YAxis tick={axis} tickLine={false} axisLine={false} allowDecimals={false} />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v) => [v, 'registers']} isAnimationActive={false} />
          <Line type="stepAfter" dataKey="registerMinimum" stroke="#c4551a" strokeWidth={2} dot={<VerdictDot />} isAnimationActive={false} connectNulls />
        </LineChart>
      </ChartCard>
      <ChartCard title="Violations" summary={lastAndFirst(points.map((p) => p.violations), String)}>
        <BarChart accessibilityLayer={false} data={data} margin={{ top: 8, right: 8, bottom: 0, left: -12 }}>
          <CartesianGrid vertical={false} stroke="#e9ebf4" />
          <XAxis dataKey="label" tick={axis} tickLine={false} minTickGap={16} />
          <YAxis tick={axis} tickLine={false} axisLine={false} allowDecimals={false} />
          <Tooltip labelFormatter={tooltipLabel} formatter={(v) => [v, 'violations']} isAnimationActive={false} />
          <Bar dataKey="violations" fill="#b4232c" radius={[3, 3, 0, 0]} maxBarSize={28} isAnimationActive={false} />
        </BarChart>
      </ChartCard>
    </div>
  );
}
