import { useRef } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import type { ScheduleRow } from '../../shared/types';
import { pct } from './format';

const ROW_HEIGHT = 37;

/**
 * The folding sets as a grid: one row per unit, one column per time partition 0..N-1.
 * Time runs to the right here as in the lifetime chart and the register table. Rows are
 * virtualised, since a large datapath can be folded onto hundreds of units.
 */
export function ScheduleGrid({ schedule, factor }: { schedule: ScheduleRow[]; factor: number }) {
  const scrollRef = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({
    count: schedule.length,
    getScrollElement: () => scrollRef.current,
    estimateSize: () => ROW_HEIGHT,
    overscan: 10,
  });
  if (schedule.length === 0) return <p className="text-sm text-ink-600">This design has no units.</p>;
  const parts = Array.from({ length: factor }, (_, t) => t);
  const items = virtualizer.getVirtualItems();
  const padTop = items.length ? items[0].start : 0;
  const padBottom = items.length ? virtualizer.getTotalSize() - items[items.length - 1].end : 0;
  const th = 'sticky top-0 border-b border-ink-200 bg-ink-50 py-2 text-xs font-medium text-ink-600';
  return (
    <div ref={scrollRef} className="relative isolate max-h-[28rem] overflow-auto rounded-lg border border-ink-200" tabIndex={0} role="region" aria-label="Schedule grid (scrolls)">
      <table className="border-collapse text-sm" aria-rowcount={schedule.length + 1}>
        <caption className="sr-only">
          Schedule: which node each unit runs in each of the {factor} time partitions; a hatched cell is an idle partition
        </caption>
        <thead>
          <tr aria-rowindex={1}>
            <th scope="col" className={`${th} left-0 z-20 border-r px-3 text-left uppercase tracking-wider`}>
              Unit
            </th>
            {parts.map((t) => (
              <th key={t} scope="col" className={`${th} z-10 min-w-16 px-2 text-center`}>
                <span className="sr-only">partition </span>
                {t}
              </th>
            ))}
            <th scope="col" className={`${th} z-10 border-l px-3 text-right uppercase tracking-wider`}>
              Busy
            </th>
          </tr>
        </thead>
        <tbody>
          {padTop > 0 && (
            <tr aria-hidden="true">
              <td colSpan={factor + 2} style={{ height: padTop, padding: 0, border: 0 }} />
            </tr>
          )}
          {items.map((vi) => {
            const row = schedule[vi.index];
            let busy = 0;
            for (const s of row.slots) if (s !== null) busy++;
            return (
              <tr key={row.unit} aria-rowindex={vi.index + 2} style={{ height: ROW_HEIGHT }}>
                <th scope="row" className="sticky left-0 z-10 border-b border-r border-ink-200 bg-white px-3 text-left font-medium whitespace-nowrap">
                  {row.unit}
                  <span className="ml-2 text-xs font-normal text-ink-500">
                    {row.kind}
                    {row.stages > 0 ? ` · ${row.stages} stage${row.stages === 1 ? '' : 's'}` : ''}
                  </span>
                </th>
                {parts.map((t) => {
                  const node = row.slots[t] ?? null;
                  return node === null ? (
                    <td key={t} className="idle-hatch border-b border-l border-ink-100 px-2 text-center">
                      <span className="sr-only">idle</span>
                    </td>
                  ) : (
                    <td key={t} className="border-b border-l border-ink-100 px-1">
                      <span className="block truncate rounded-md bg-ink-800 px-2 py-1 text-center text-xs font-medium text-white" title={`${node} on ${row.unit} at partition ${t}`}>
                        {node}
                      </span>
                    </td>
                  );
                })}
                <td className="border-b border-l border-ink-200 px-3 text-right whitespace-nowrap text-ink-700">
                  {busy}/{factor} <span className="text-xs text-ink-500">({pct(busy / factor, 0)})</span>
                </td>
              </tr>
            );
          })}
          {padBottom > 0 && (
            <tr aria-hidden="true">
              <td colSpan={factor + 2} style={{ height: padBottom, padding: 0, border: 0 }} />
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}
