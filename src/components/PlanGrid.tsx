import type { JobUnit } from '../api/types';
import { PartitionGrid } from './PartitionGrid';

type Sets = Record<string, (string | null)[]>;

/** Cells where `sets` differs from `other`: the slots the plan changed. */
export function changedSlots(units: JobUnit[], factor: number, sets: Sets, other: Sets | null): Set<string> {
  const out = new Set<string>();
  if (!other) return out;
  for (const u of units) {
    for (let t = 0; t < factor; t++) {
      if ((sets[u.id]?.[t] ?? null) !== (other[u.id]?.[t] ?? null)) out.add(`${u.id}:${t}`);
    }
  }
  return out;
}

/**
 * Folding sets as a units x partitions grid, like the schedule of a checked design; with
 * `other`, the cells that differ from it carry an ember corner and the word "changed" for
 * screen readers.
 */
export function PlanGrid({ units, factor, sets, other, label, testId }: { units: JobUnit[]; factor: number; sets: Sets; other: Sets | null; label: string; testId?: string }) {
  if (units.length === 0) return <p className="text-sm text-ink-600">No units.</p>;
  const changed = changedSlots(units, factor, sets, other);
  const at = (i: number, t: number) => sets[units[i]!.id]?.[t] ?? null;
  return (
    <PartitionGrid
      rows={units.length}
      factor={factor}
      label={`${label} (scrolls)`}
      caption={`${label}: which node each unit runs in each of the ${factor} time partitions; a hatched cell is idle${other ? '; changed cells are marked' : ''}`}
      corner="Unit"
      trailing="Busy"
      trailingAlign="right"
      testId={testId}
      rowKey={(i) => units[i]!.id}
      rowHeader={(i) => (
        <>
          {units[i]!.id}
          <span className="ml-2 text-xs font-normal text-ink-500">
            {units[i]!.kind}
            {units[i]!.stages > 0 ? ` · ${units[i]!.stages} stage${units[i]!.stages === 1 ? '' : 's'}` : ''}
          </span>
        </>
      )}
      idle={(i, t) => (at(i, t) === null ? (changed.has(`${units[i]!.id}:${t}`) ? 'idle, changed' : 'idle') : null)}
      cell={(i, t) => {
        const node = at(i, t)!;
        const moved = changed.has(`${units[i]!.id}:${t}`);
        return (
          <span
            className={`relative block truncate rounded-md px-2 py-1 text-center text-xs font-medium ${moved ? 'bg-ember-600 text-white' : 'bg-ink-800 text-white'}`}
            title={`${node} on ${units[i]!.id} at partition ${t}${moved ? ' (changed)' : ''}`}
            data-changed={moved ? 'true' : undefined}
          >
            {node}
            {moved && <span className="sr-only"> (changed)</span>}
          </span>
        );
      }}
      trailingCell={(i) => {
        const n = Array.from({ length: factor }, (_, t) => at(i, t)).filter((x) => x !== null).length;
        return <span className="text-ink-700">{n}/{factor}</span>;
      }}
    />
  );
}
