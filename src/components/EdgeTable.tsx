import { useMemo, useRef, useState, useId } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import type { EdgeResult } from '../../shared/types';
import { inputClass, tableClass } from './Panel';

type SortKey = 'index' | 'from' | 'to' | 'delays' | 'foldedDelay' | 'retimedDelays' | 'retimedFoldedDelay';

interface Row extends EdgeResult {
  index: number;
}

const ROW_HEIGHT = 37;

/**
 * The edges of a design with their folded and retimed delays. Only the rows in view are in the
 * DOM (a design may have many thousands of edges); spacer rows keep the table's semantics and
 * aria-rowindex tells a screen reader where each row sits.
 */
export function EdgeTable({
  edges,
  retiming = 'not-needed',
}: {
  edges: EdgeResult[];
  /** 'impossible': no retiming exists, so the report's retimed delays are the design's own and are not shown. */
  retiming?: 'not-needed' | 'retimed' | 'impossible';
}) {
  const showRetimed = retiming !== 'impossible';
  const columns = showRetimed ? 7 : 5;
  const [filter, setFilter] = useState('');
  const [onlyNegative, setOnlyNegative] = useState(false);
  const [sort, setSort] = useState<{ key: SortKey; dir: 1 | -1 }>({ key: 'index', dir: 1 });
  const scrollRef = useRef<HTMLDivElement>(null);
  const captionId = useId();

  const negativeCount = useMemo(() => edges.reduce((n, e) => n + (e.foldedDelay !== null && e.foldedDelay < 0 ? 1 : 0), 0), [edges]);

  const rows = useMemo(() => {
    const q = filter.trim().toLowerCase();
    let list: Row[] = edges.map((e, index) => ({ ...e, index }));
    if (q) list = list.filter((e) => e.from.toLowerCase().includes(q) || e.to.toLowerCase().includes(q));
    if (onlyNegative) list = list.filter((e) => e.foldedDelay !== null && e.foldedDelay < 0);
    if (sort.key !== 'index' || sort.dir !== 1) {
      const k = sort.key;
      list = [...list].sort((a, b) => {
        const av = a[k];
        const bv = b[k];
        if (av === bv) return a.index - b.index;
        if (av === null) return 1; // taps (no folded delay) always last
        if (bv === null) return -1;
        return (av < bv ? -1 : 1) * sort.dir;
      });
    }
    return list;
  }, [edges, filter, onlyNegative, sort]);

  const virtualizer = useVirtualizer({
    count: rows.length,
    getScrollElement: () => scrollRef.current,
    estimateSize: () => ROW_HEIGHT,
    overscan: 12,
  });
  const items = virtualizer.getVirtualItems();
  const padTop = items.length ? items[0].start : 0;
  const padBottom = items.length ? virtualizer.getTotalSize() - items[items.length - 1].end : 0;

  const header = (key: SortKey, label: string, title?: string, numeric = true) => {
    const active = sort.key === key;
    return (
      <th
        scope="col"
        aria-sort={active ? (sort.dir === 1 ? 'ascending' : 'descending') : 'none'}
        className={`${tableClass.th} sticky top-0 z-10 ${numeric ? 'text-right' : ''}`}
      >
        <button
          type="button"
          title={title}
          className={`inline-flex items-center gap-1 uppercase ${numeric ? 'flex-row-reverse' : ''}`}
          onClick={() => setSort((s) => ({ key, dir: s.key === key ? ((-s.dir) as 1 | -1) : 1 }))}
        >
          {label}
          <span aria-hidden="true" className={active ? 'text-ember-600' : 'text-ink-300'}>
            {active && sort.dir === -1 ? '▾' : '▴'}
          </span>
        </button>
      </th>
    );
  };

  return (
    <div>
      {!showRetimed && (
        <p className="mb-3 rounded-lg border border-fail-600/30 bg-fail-100/60 px-3 py-2 text-sm text-fail-700" data-testid="no-retimed-datapath">
          No retimed datapath exists: no retiming removes the negative folded delays of this plan, so the table has no retimed
          columns. <a href="#retiming" className="font-medium underline underline-offset-2">The loop that prevents it</a> is under Retiming.
        </p>
      )}
      <div className="mb-3 flex flex-wrap items-center gap-4">
        <label className="flex items-center gap-2 text-sm whitespace-nowrap text-ink-700">
          <span>Filter by node</span>
          <input
            type="search"
            className={`${inputClass} w-48 py-1.5`}
            value={filter}
            onChange={(e) => setFilter(e.target.value)}
            placeholder="e.g. s1"
          />
        </label>
        <label className="flex items-center gap-2 text-sm text-ink-700">
          <input type="checkbox" className="size-4 accent-ember-600" checked={onlyNegative} onChange={(e) => setOnlyNegative(e.target.checked)} />
          Only negative folded delays ({negativeCount})
        </label>
        <span className="ml-auto text-sm text-ink-600" aria-live="polite">
          {rows.length === edges.length ? `${edges.length.toLocaleString('en-US')} edges` : `${rows.length.toLocaleString('en-US')} of ${edges.length.toLocaleString('en-US')} edges`}
        </span>
      </div>
      <div
        ref={scrollRef}
        tabIndex={0}
        role="region"
        aria-labelledby={captionId}
        className="relative max-h-[28rem] overflow-auto rounded-lg border border-ink-200"
        data-testid="edge-table-scroll"
      >
        <table className={tableClass.table} aria-rowcount={rows.length + 1}>
          <caption id={captionId} className="sr-only">
            {showRetimed
              ? 'Edges with their delays, folded delays and retimed delays; negative folded delays are marked'
              : 'Edges with their delays and folded delays; no retiming exists, so there are no retimed delays; negative folded delays are marked'}
          </caption>
          <thead>
            <tr aria-rowindex={1}>
              {header('index', '#', 'Position in the design file')}
              {header('from', 'From', undefined, false)}
              {header('to', 'To', undefined, false)}
              {header('delays', 'Delays w', 'Delays on the edge in the design')}
              {header('foldedDelay', 'Folded D_F', 'Registers between the units of the two nodes before retiming')}
              {showRetimed && header('retimedDelays', 'Retimed w_r', 'Delays after retiming')}
              {showRetimed && header('retimedFoldedDelay', 'Retimed D_F', 'Folded delay after retiming')}
            </tr>
          </thead>
          <tbody>
            {padTop > 0 && (
              <tr aria-hidden="true">
                <td colSpan={columns} style={{ height: padTop, padding: 0, border: 0 }} />
              </tr>
            )}
            {items.map((vi) => {
              const e = rows[vi.index];
              const negative = e.foldedDelay !== null && e.foldedDelay < 0;
              const retimed = e.retimedDelays !== e.delays;
              return (
                <tr
                  key={e.index}
                  aria-rowindex={vi.index + 2}
                  style={{ height: ROW_HEIGHT }}
                  className={negative ? 'bg-fail-100/50' : vi.index % 2 ? 'bg-ink-50/40' : ''}
                  data-negative={negative || undefined}
                >
                  <td className={`${tableClass.td} text-right text-ink-500`}>{e.index + 1}</td>
                  <td className={`${tableClass.td} font-medium`}>{e.from}</td>
                  <td className={`${tableClass.td} font-medium`}>{e.to}</td>
                  <td className={`${tableClass.td} text-right`}>{e.delays}</td>
                  <td className={`${tableClass.td} text-right`}>
                    <FoldedDelay value={e.foldedDelay} />
                  </td>
                  {showRetimed && (
                    <td className={`${tableClass.td} text-right ${retimed ? 'font-bold text-ember-700' : ''}`}>
                      {e.retimedDelays}
                      {retimed && <span className="sr-only"> (changed by retiming)</span>}
                    </td>
                  )}
                  {showRetimed && (
                    <td className={`${tableClass.td} text-right`}>
                      <FoldedDelay value={e.retimedFoldedDelay} />
                    </td>
                  )}
                </tr>
              );
            })}
            {padBottom > 0 && (
              <tr aria-hidden="true">
                <td colSpan={columns} style={{ height: padBottom, padding: 0, border: 0 }} />
              </tr>
            )}
          </tbody>
        </table>
        {rows.length === 0 && <p className="px-4 py-6 text-center text-sm text-ink-600">No edge matches the filter.</p>}
      </div>
      <p className="mt-2 text-xs text-ink-600">
        <NegativeMark /> marks a negative folded delay: the consumer would need a value before it exists.
        {retiming === 'retimed' ? ' Retimed delays in bold differ from the design.' : ''} “tap” is an edge into an output read when produced: it has no folded delay.
      </p>
    </div>
  );
}

function NegativeMark() {
  return (
    <svg width="11" height="11" viewBox="0 0 12 12" aria-hidden="true" className="mr-0.5 inline-block align-[-1px] text-fail-600">
      <path d="M1 2H11L6 11Z" fill="currentColor" />
    </svg>
  );
}

export function FoldedDelay({ value }: { value: number | null }) {
  if (value === null) return <span className="text-ink-500">tap</span>;
  if (value < 0)
    return (
      <span className="inline-flex items-center gap-1 font-bold text-fail-700" data-testid="negative-delay">
        <NegativeMark />
        {value}
        <span className="sr-only"> (negative)</span>
      </span>
    );
  return <span>{value}</span>;
}
