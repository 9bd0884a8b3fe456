import { useRef, type ReactNode } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';

const ROW_HEIGHT = 38;
// Whole class names, so that Tailwind finds them in the source.
const ALIGN = { left: 'text-left', right: 'text-right' } as const;

/**
 * A table with one sticky header row, one sticky row header per row and one column per partition,
 * drawing only the rows in view (a large datapath has hundreds of ports and thousands of registers).
 * The schedule, the register allocation and the control tables all use it.
 */
export function PartitionGrid({
  rows,
  factor,
  label,
  caption,
  corner,
  trailing,
  rowKey,
  rowHeader,
  cell,
  idle,
  trailingCell,
  trailingAlign = 'left',
  testId,
}: {
  rows: number;
  factor: number;
  label: string;
  caption: string;
  corner: string;
  trailing?: string;
  rowKey: (i: number) => string;
  rowHeader: (i: number) => ReactNode;
  cell: (i: number, t: number) => ReactNode;
  /** When the cell is empty: what it means, for screen readers (the cell is hatched); else null. */
  idle?: (i: number, t: number) => string | null;
  trailingCell?: (i: number) => ReactNode;
  /** Numbers in the trailing column read better aligned right. */
  trailingAlign?: 'left' | 'right';
  testId?: string;
}) {
  const scrollRef = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({
    count: rows,
    getScrollElement: () => scrollRef.current,
    estimateSize: () => ROW_HEIGHT,
    overscan: 8,
  });
  const items = virtualizer.getVirtualItems();
  const padTop = items.length ? items[0].start : 0;
  const padBottom = items.length ? virtualizer.getTotalSize() - items[items.length - 1].end : 0;
  const parts = Array.from({ length: factor }, (_, t) => t);
  const span = factor + 1 + (trailing ? 1 : 0);
  const th = 'sticky top-0 border-b border-ink-200 bg-ink-50 py-2 text-xs font-medium text-ink-600';
  return (
    <div ref={scrollRef} className="relative isolate max-h-[26rem] overflow-auto rounded-lg border border-ink-200" tabIndex={0} role="region" aria-label={label} data-testid={testId}>
      <table className="border-collapse text-sm" aria-rowcount={rows + 1}>
        <caption className="sr-only">{caption}</caption>
        <thead>
          <tr aria-rowindex={1}>
            <th scope="col" className={`${th} left-0 z-20 border-r px-3 text-left uppercase tracking-wider`}>
              {corner}
            </th>
            {parts.map((t) => (
              <th key={t} scope="col" className={`${th} z-10 min-w-20 px-2 text-center`}>
                <span className="sr-only">partition </span>
                {t}
              </th>
            ))}
            {trailing && (
              <th scope="col" className={`${th} z-10 border-l px-3 ${ALIGN[trailingAlign]} uppercase tracking-wider`}>
                {trailing}
              </th>
            )}
          </tr>
        </thead>
        <tbody>
          {padTop > 0 && (
            <tr aria-hidden="true">
              <td colSpan={span} style={{ height: padTop, padding: 0, border: 0 }} />
            </tr>
          )}
          {items.map((vi) => (
            <tr key={rowKey(vi.index)} aria-rowindex={vi.index + 2} style={{ height: ROW_HEIGHT }}>
              <th scope="row" className="sticky left-0 z-10 border-b border-r border-ink-200 bg-white px-3 text-left font-medium whitespace-nowrap">
                {rowHeader(vi.index)}
              </th>
              {parts.map((t) => {
                const empty = idle?.(vi.index, t) ?? null;
                return empty !== null ? (
                  <td key={t} className="idle-hatch border-b border-l border-ink-100">
                    <span className="sr-only">{empty}</span>
                  </td>
                ) : (
                  <td key={t} className="border-b border-l border-ink-100 px-2 text-center whitespace-nowrap">
                    {cell(vi.index, t)}
                  </td>
                );
              })}
              {trailingCell && <td className={`border-b border-l border-ink-200 px-3 ${ALIGN[trailingAlign]} whitespace-nowrap`}>{trailingCell(vi.index)}</td>}
            </tr>
          ))}
          {padBottom > 0 && (
            <tr aria-hidden="true">
              <td colSpan={span} style={{ height: padBottom, padding: 0, border: 0 }} />
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}
