import { CartesianGrid, Line, LineChart, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { HardwareFigures, RunListItem } from '../api/types';
import { shortCommit } from './format';
import { SERIES, axis, dayFmt } from './chartStyle';

const METRICS: { key: keyof Pick<HardwareFigures, 'cells' | 'flipFlops' | 'depth'>; title: string }[] = [
  { key: 'cells', title: 'Cells (folded)' },
  { key: 'flipFlops', title: 'Flip-flops (folded)' },
  { key: 'depth', title: 'Logic depth (folded)' },
];

function firstAndLast(values: (number | null)[]): string {
  const v = values.filter((x): x is number => x !== null);
  if (!v.length) return 'no values';
  return v.length === 1 ? String(v[0]) : `${v[0]} → ${v[v.length - 1]}`;
}

/**
 * Area and timing of the folded design over the runs of a branch, from the hardware summaries
 * uploaded with them (`pleat rtl --area`, docs/rtl.md): cells, flip-flops and logic depth (levels
 * of generic cells, not ns), one line per design. Nothing is drawn when no run has a summary.
 */
export function HardwareTrends({ runs, maxSeries = SERIES.length }: { runs: RunListItem[]; maxSeries?: number }) {
  const names: string[] = [];
  for (const r of [...runs].reverse()) for (const d of r.designs) if (d.hardware && !names.includes(d.name)) names.push(d.name);
  if (!names.length) return null;
  const shown = names.slice(0, maxSeries);
  const withHardware = runs.filter((r) => r.designs.some((d) => d.hardware && shown.includes(d.name)));
  const rows = withHardware.map((r) => {
    const row: Record<string, number | string | null> = { t: Date.parse(r.createdAt), commit: r.commit };
    shown.forEach((name, k) => {
      const h = r.designs.find((d) => d.name === name)?.hardware;
      for (const m of METRICS) row[`${m.key}${k}`] = h ? h.folded[m.key] : null;
    });
    return row;
  });
  const xAxis = <XAxis dataKey="t" type="number" scale="time" domain={['dataMin', 'dataMax']} tick={axis} tickLine={false} minTickGap={24} tickFormatter={(v: number) => dayFmt.format(new Date(v))} />;
  return (
    <section aria-label="Area and timing" className="mt-4" data-testid="hardware-trends">
      <div className="grid gap-4 lg:grid-cols-3">
        {METRICS.map((m) => {
          const summary = shown.map((name, k) => `${name} ${firstAndLast(rows.map((row) => row[`${m.key}${k}`] as number | null))}`).join('; ');
          return (
            <figure key={m.key} className="rounded-xl border border-ink-200 bg-white p-4" aria-label={`${m.title}: ${summary}`}>
              <figcaption className="mb-2 flex items-baseline justify-between gap-2">
                <span className="text-sm font-bold text-ink-900">{m.title}</span>
                <span className="text-xs text-ink-600" data-testid={`hardware-${m.key}`}>{summary}</span>
              </figcaption>
              <div className="h-44" aria-hidden="true">
                <ResponsiveContainer width="100%" height="100%">
                  <LineChart accessibilityLayer={false} data={rows} margin={{ top: 8, right: 8, bottom: 0, left: -4 }}>
                    <CartesianGrid vertical={false} stroke="#e9ebf4" />
                    {xAxis}
                    <YAxis tick={axis} tickLine={false} axisLine={false} allowDecimals={false} />
                    <Tooltip
                      labelFormatter={(_: unknown, payload: readonly { payload?: Record<string, unknown> }[]) => shortCommit(String(payload?.[0]?.payload?.commit ?? ''))}
                      formatter={(v, name) => [v, shown[Number(String(name).slice(m.key.length))] ?? String(name)]}
                      isAnimationActive={false}
                    />
                    {shown.map((name, k) => (
                      <Line key={name} type="stepAfter" dataKey={`${m.key}${k}`} stroke={SERIES[k % SERIES.length]!.color} strokeDasharray={SERIES[k % SERIES.length]!.dash} strokeWidth={2} dot={{ r: 3 }} isAnimationActive={false} connectNulls />
                    ))}
                  </LineChart>
                </ResponsiveContainer>
              </div>
            </figure>
          );
        })}
      </div>
      <p className="mt-2 text-xs text-ink-600">
        Area and timing of the folded design from the hardware summaries of <code>pleat rtl --area</code> uploaded with the runs
        ({shown.join(', ')}{names.length > shown.length ? `; ${names.length - shown.length} more: choose a design above` : ''}). Cells and flip-flops are Yosys generic cells; depth is the
        longest path in levels of generic cells, not nanoseconds (a gap is a combinational loop or a run without a summary).
      </p>
    </section>
  );
}
