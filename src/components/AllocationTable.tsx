import { useMemo } from 'react';
import type { Allocation } from '../../shared/types';
import { PartitionGrid } from './PartitionGrid';

/**
 * The register allocation as one row per register and one column per partition (time runs to
 * the right, as in the schedule grid). A cell names the variable the register holds during that
 * partition and, in small print, where it was loaded from at the end of the previous partition.
 * Rows are virtualised: a large datapath may need hundreds of registers.
 */
export function AllocationTable({ allocation }: { allocation: Allocation }) {
  const { registers, factor: N, cells } = allocation;

  // loadedFrom[k][t]: the source of the value that register k holds from partition t on.
  const loadedFrom = useMemo(() => {
    const m = new Map<string, string>();
    for (const mv of allocation.moves) {
      const t = (mv.cycle + 1) % N;
      m.set(`${mv.to}:${t}`, mv.from === 'unit' ? 'unit' : `R${mv.from}`);
    }
    return m;
  }, [allocation.moves, N]);

  if (registers === 0) return <p className="text-sm text-ink-600">No registers are needed.</p>;

  return (
    <div>
      <PartitionGrid
        rows={registers}
        factor={N}
        label="Register allocation table (scrolls)"
        caption={`Register allocation by ${allocation.method}: the variable each register holds in each partition; “from” says what loaded it`}
        corner="Register"
        rowKey={(k) => String(k)}
        rowHeader={(k) => `R${k}`}
        idle={(k, t) => ((cells[t]?.[k] ?? null) === null ? 'empty' : null)}
        cell={(k, t) => {
          const [name, age] = (cells[t]?.[k] ?? '').split('@');
          const src = loadedFrom.get(`${k}:${t}`);
          return (
            <>
              <span className="font-medium">{name}</span>
              {age && <sup className="ml-0.5 text-ember-700" title={`${age} iteration${age === '1' ? '' : 's'} old`}>@{age}</sup>}
              {src && <span className="block text-[10px] leading-tight text-ink-500">from {src}</span>}
            </>
          );
        }}
      />
      <p className="mt-2 text-xs text-ink-600">
        {registers} register{registers === 1 ? '' : 's'}, {allocation.moves.length} transfer{allocation.moves.length === 1 ? '' : 's'} per iteration ({allocation.method}).
        “name@j” is the value of name from j iterations back; “from unit” is a fresh result, “from R&lt;i&gt;” a move between registers.
      </p>
    </div>
  );
}
