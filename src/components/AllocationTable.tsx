import { useMemo, useRef } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import type { Allocation } from '../../shared/types';

const ROW_HEIGHT = 38;

/**
 * The register allocation as one row per register and one column per partition (time runs to
 * the right, as in the schedule grid). A cell names the variable the register holds during that
 * partition and, in small print, where it was loaded from at the end of the previous partition.
 * Rows are virtualised: a large datapath may need hundreds of registers.
 */
export function AllocationTable({ allocation }: { allocation: Allocation }) {
  const { registers, factor: N, cells } = allocation;
  const scrollRef = useRef<HTMLDivElement>(null);

  // loadedFrom[k][t]: the source of the value that register k holds from partition t on.
  const loadedFrom = useMemo(() => {
    const m = new Map<string, string>();
    for (const mv of allocation.moves) {
      const t = (mv.cycle + 1) % N;
      m.set(`${mv.to}:${t}`, mv.from === 'unit' ? 'unit' : `R${mv.from}`);
    }
    return m;
  }, [allocation.moves, N]);

  const virtualizer = useVirtualizer({
    count: registers,
    getScrollElement: () => scrollRef.current,
    estimateSize: () => ROW_HEIGHT,
    overscan: 8,
  });
  const items = virtualizer.getVirtualItems();
  const padTop = items.length ? items[0].start : 0;
  const padBottom = items.length ? virtualizer.getTotalSize() - items[items.length - 1].end : 0;
  const parts = Array.from({ length: N }, (_, t) => t);

  if (registers === 0) return <p className="text-sm text-ink-600">No registers are needed.</p>;

  return (
    <div>
      <div ref={scrollRef} className="relative isolate max-h-[26rem] overflow-auto rounded-lg border border-ink-200" tabIndex={0} role="region" aria-label="Register allocation table (scrolls)">
        <table className="border-collapse text-sm" aria-rowcount={registers + 1}>
          <caption className="sr-only">
            Register allocation by {allocation.method}: the variable each register holds in each partition; “from” says what loaded it
          </caption>
          <thead>
            <tr aria-rowindex={1}>
              <th scope="col" className="sticky top-0 left-0 z-20 border-b border-r border-ink-200 bg-ink-50 px-3 py-2 text-left text-xs font-medium uppercase tracking-wider text-ink-600">
                Register
              </th>
              {parts.map((t) => (
                <th key={t} scope="col" className="sticky top-0 z-10 min-w-20 border-b border-ink-200 bg-ink-50 px-2 py-2 text-center text-xs font-medium text-ink-600">
                  <span className="sr-only">partition </span>
                  {t}
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {padTop > 0 && (
              <tr aria-hidden="true">
                <td colSpan={N + 1} style={{ height: padTop, padding: 0, border: 0 }} />
              </tr>
            )}
            {items.map((vi) => {
              const k = vi.index;
              return (
                <tr key={k} aria-rowindex={k + 2} style={{ height: ROW_HEIGHT }}>
                  <th scope="row" className="sticky left-0 z-10 border-b border-r border-ink-200 bg-white px-3 text-left font-medium">
                    R{k}
                  </th>
                  {parts.map((t) => {
                    const v = cells[t]?.[k] ?? null;
                    const src = loadedFrom.get(`${k}:${t}`);
                    if (v === null)
                      return (
                        <td key={t} className="idle-hatch border-b border-l border-ink-100">
                          <span className="sr-only">empty</span>
                        </td>
                      );
                    const [name, age] = v.split('@');
                    return (
                      <td key={t} className="border-b border-l border-ink-100 px-2 text-center whitespace-nowrap">
                        <span className="font-medium">{name}</span>
                        {age && <sup className="ml-0.5 text-ember-700" title={`${age} iteration${age === '1' ? '' : 's'} old`}>@{age}</sup>}
                        {src && <span className="block text-[10px] leading-tight text-ink-500">from {src}</span>}
                      </td>
                    );
                  })}
                </tr>
              );
            })}
            {padBottom > 0 && (
              <tr aria-hidden="true">
                <td colSpan={N + 1} style={{ height: padBottom, padding: 0, border: 0 }} />
              </tr>
            )}
          </tbody>
        </table>
      </div>
      <p className="mt-2 text-xs text-ink-600">
        {registers} register{registers === 1 ? '' : 's'}, {allocation.moves.length} transfer{allocation.moves.length === 1 ? '' : 's'} per iteration ({allocation.method}).
        “name@j” is the value of name from j iterations back; “from unit” is a fresh result, “from R&lt;i&gt;” a move between registers.
      </p>
    </div>
  );
}
