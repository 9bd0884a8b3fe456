import { ScrollRegion } from './Panel';
import { useMemo, useRef } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import { Bar, BarChart, CartesianGrid, Cell, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import type { LifetimeChart as LifetimeData } from '../../shared/types';
import { useWidth } from './useWidth';

const ROW = 20;
const LABEL_W = 136;

/**
 * Lifetime analysis drawn as one bar per variable: produced at the end of cycle tIn (the dot),
 * live in cycles tIn+1 .. tOut (the bar). Cycles are absolute for iteration 0; the shaded bands
 * are the iterations, so a bar that crosses a band boundary is held into the next iteration.
 * Only the rows in view are drawn (a large datapath has thousands of variables).
 * Below it, the live count per partition in the periodic steady state; its maximum is the
 * register minimum.
 */
export function LifetimeChart({ lifetimes, registerMinimum }: { lifetimes: LifetimeData; registerMinimum?: number }) {
  const { factor: N, variables, live } = lifetimes;
  const [ref, width] = useWidth<HTMLDivElement>();
  const scrollRef = useRef<HTMLDivElement>(null);
  const maxCycle = useMemo(() => {
    let m = N;
    for (const v of variables) if (v.tOut + 1 > m) m = v.tOut + 1;
    return m;
  }, [variables, N]);
  const plotW = Math.max(200, width - LABEL_W - 24);
  const cell = plotW / maxCycle;
  const peak = live.length ? Math.max(...live) : 0;
  const iterations = Math.ceil(maxCycle / N);
  const tickEvery = Math.max(1, Math.ceil(28 / cell));
  const ticks = Array.from({ length: Math.floor((maxCycle - 1) / tickEvery) + 1 }, (_, k) => k * tickEvery);

  const virtualizer = useVirtualizer({
    count: variables.length,
    getScrollElement: () => scrollRef.current,
    estimateSize: () => ROW,
    overscan: 20,
  });

  // Iterations alternate in shade; drawn once as a background for all rows.
  const bands = `repeating-linear-gradient(90deg, #ffffff 0 ${N * cell}px, #f1f2f8 ${N * cell}px ${2 * N * cell}px)`;

  return (
    <div ref={ref}>
      {variables.length === 0 ? (
        <p className="text-sm text-ink-600">No value has to be held in a register: every folded delay is zero.</p>
      ) : (
        <figure
          className="rounded-lg border border-ink-200"
          aria-label={`Lifetimes of ${variables.length} variables over ${maxCycle} cycles; at most ${peak} are live at once`}
        >
          <div className="flex border-b border-ink-200 bg-ink-50 text-[10px] text-ink-500" aria-hidden="true">
            <div style={{ width: LABEL_W }} className="shrink-0 px-2 py-1 text-right font-medium uppercase tracking-wider">
              variable \ cycle
            </div>
            <div className="relative h-6" style={{ width: plotW }}>
              {ticks.map((c) => (
                <span key={c} className="absolute top-1" style={{ left: c * cell + 2 }}>
                  {c}
                </span>
              ))}
              {iterations > 1 &&
                Array.from({ length: iterations }, (_, i) => (
                  <span key={i} className="absolute bottom-0 h-2 border-l border-ink-400" style={{ left: i * N * cell }} />
                ))}
            </div>
          </div>
          <div ref={scrollRef} className="relative max-h-[24rem] overflow-y-auto" tabIndex={0} role="region" aria-label="Lifetime chart rows (scrolls)">
            <ul className="relative" style={{ height: virtualizer.getTotalSize() }}>
              {virtualizer.getVirtualItems().map((vi) => {
                const v = variables[vi.index];
                const w = Math.max(0, (v.tOut - v.tIn) * cell);
                return (
                  <li
                    key={vi.index}
                    className="absolute left-0 flex w-full items-center"
                    style={{ top: vi.start, height: ROW }}
                    aria-label={`${v.variable}: produced at cycle ${v.tIn}, live until cycle ${v.tOut}`}
                  >
                    <span style={{ width: LABEL_W }} className="shrink-0 truncate px-2 text-right text-[11px] text-ink-800" title={v.variable}>
                      {v.variable}
                    </span>
                    <span className="relative block h-full" style={{ width: plotW, background: bands }} aria-hidden="true">
                      {w > 0 && <span className="absolute top-[4px] h-[12px] rounded-[3px] bg-ink-700" style={{ left: (v.tIn + 1) * cell, width: w }} />}
                      <span className="absolute top-[6px] size-2 -translate-x-1 rounded-full bg-ember-500 ring-1 ring-white" style={{ left: (v.tIn + 1) * cell }} />
                    </span>
                  </li>
                );
              })}
            </ul>
          </div>
        </figure>
      )}
      <h3 className="mt-5 mb-2 text-sm font-bold text-ink-800">Live variables per partition (steady state)</h3>
      <div className="h-36" aria-hidden="true">
        <ResponsiveContainer width="100%" height="100%">
          <BarChart accessibilityLayer={false} data={live.map((count, t) => ({ t, count }))} margin={{ top: 8, right: 12, bottom: 0, left: -16 }}>
            <CartesianGrid vertical={false} stroke="#e9ebf4" />
            <XAxis dataKey="t" tick={{ fontSize: 11, fill: '#4b5280' }} tickLine={false} />
            <YAxis allowDecimals={false} tick={{ fontSize: 11, fill: '#4b5280' }} tickLine={false} axisLine={false} />
            <Tooltip formatter={(v) => [v, 'live']} labelFormatter={(t) => `partition ${t}`} isAnimationActive={false} />
            {registerMinimum !== undefined && <ReferenceLine y={registerMinimum} stroke="#c4551a" strokeDasharray="4 3" />}
            <Bar dataKey="count" isAnimationActive={false} radius={[3, 3, 0, 0]} maxBarSize={48}>
              {live.map((c, t) => (
                <Cell key={t} fill={c === peak ? '#c4551a' : '#4b5280'} />
              ))}
            </Bar>
          </BarChart>
        </ResponsiveContainer>
      </div>
      <ScrollRegion label="Live variables per partition" className="mt-2">
        <table className="text-xs text-ink-700">
          <caption className="sr-only">Live variables per partition</caption>
          <tbody>
            <tr>
              <th scope="row" className="pr-3 text-left font-medium text-ink-600">
                partition
              </th>
              {live.map((_, t) => (
                <td key={t} className="min-w-7 px-1 text-center text-ink-500">
                  {t}
                </td>
              ))}
            </tr>
            <tr>
              <th scope="row" className="pr-3 text-left font-medium text-ink-600">
                live
              </th>
              {live.map((c, t) => (
                <td key={t} className={`px-1 text-center ${c === peak ? 'font-bold text-ember-700' : ''}`}>
                  {c}
                </td>
              ))}
            </tr>
          </tbody>
        </table>
      </ScrollRegion>
      <p className="mt-2 text-xs text-ink-600">
        <span aria-hidden="true" className="mr-1 inline-block size-2 rounded-full bg-ember-500" />
        produced · <span aria-hidden="true" className="mx-1 inline-block h-2 w-4 rounded-sm bg-ink-700" /> held in a register
        {iterations > 1 ? ' · shaded bands are iterations' : ''} · the peak of {peak} live variable{peak === 1 ? '' : 's'} is the fewest registers any allocation can use.
      </p>
    </div>
  );
}
