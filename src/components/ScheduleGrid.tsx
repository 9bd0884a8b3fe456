import type { ScheduleRow } from '../../shared/types';
import { pct } from './format';
import { PartitionGrid } from './PartitionGrid';

/**
 * The folding sets as a grid: one row per unit, one column per time partition 0..N-1.
 * Time runs to the right here as in the lifetime chart and the register table. Rows are
 * virtualised, since a large datapath can be folded onto hundreds of units.
 */
export function ScheduleGrid({ schedule, factor }: { schedule: ScheduleRow[]; factor: number }) {
  if (schedule.length === 0) return <p className="text-sm text-ink-600">This design has no units.</p>;
  const busy = (row: ScheduleRow) => row.slots.filter((s) => s !== null).length;
  return (
    <PartitionGrid
      rows={schedule.length}
      factor={factor}
      label="Schedule grid (scrolls)"
      caption={`Schedule: which node each unit runs in each of the ${factor} time partitions; a hatched cell is an idle partition`}
      corner="Unit"
      trailing="Busy"
      trailingAlign="right"
      rowKey={(i) => schedule[i].unit}
      rowHeader={(i) => {
        const row = schedule[i];
        return (
          <>
            {row.unit}
            <span className="ml-2 text-xs font-normal text-ink-500">
              {row.kind}
              {row.stages > 0 ? ` · ${row.stages} stage${row.stages === 1 ? '' : 's'}` : ''}
            </span>
          </>
        );
      }}
      idle={(i, t) => ((schedule[i].slots[t] ?? null) === null ? 'idle' : null)}
      cell={(i, t) => (
        <span className="block truncate rounded-md bg-ink-800 px-2 py-1 text-center text-xs font-medium text-white" title={`${schedule[i].slots[t]} on ${schedule[i].unit} at partition ${t}`}>
          {schedule[i].slots[t]}
        </span>
      )}
      trailingCell={(i) => {
        const n = busy(schedule[i]);
        return (
          <span className="text-ink-700">
            {n}/{factor} <span className="text-xs text-ink-500">({pct(n / factor, 0)})</span>
          </span>
        );
      }}
    />
  );
}
