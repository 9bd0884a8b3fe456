import { useEffect, useMemo, useRef } from 'react';
import { useVirtualizer } from '@tanstack/react-virtual';
import type { Diagnostic } from '../../shared/types';
import { SeverityIcon } from './StatusBadge';

const LINE = 22;

/**
 * The design file as the browser read it, with line numbers, and each finding marked on its
 * line (a square for an error, a triangle for a warning) and its column underlined. Only the
 * lines in view are drawn, so a file of many megabytes scrolls as fast as a small one.
 */
export function SourceView({ text, diagnostics, focus }: { text: string; diagnostics: Diagnostic[]; focus: { line: number; n: number } | null }) {
  const lines = useMemo(() => text.split(/\r?\n/), [text]);
  const byLine = useMemo(() => {
    const m = new Map<number, Diagnostic[]>();
    for (const d of diagnostics) if (d.line !== null) m.set(d.line, [...(m.get(d.line) ?? []), d]);
    return m;
  }, [diagnostics]);
  const scrollRef = useRef<HTMLDivElement>(null);
  const virtualizer = useVirtualizer({ count: lines.length, getScrollElement: () => scrollRef.current, estimateSize: () => LINE, overscan: 20 });
  const gutter = String(lines.length).length;

  useEffect(() => {
    if (focus) virtualizer.scrollToIndex(focus.line - 1, { align: 'center' });
  }, [focus, virtualizer]);

  return (
    <div
      ref={scrollRef}
      className="relative max-h-[28rem] overflow-auto rounded-lg border border-ink-200 bg-ink-950 font-mono text-[13px] text-ink-100"
      tabIndex={0}
      role="region"
      aria-label={`The design file, ${lines.length} lines`}
      data-testid="source-view"
    >
      <div className="relative" style={{ height: virtualizer.getTotalSize(), minWidth: '100%' }}>
        {virtualizer.getVirtualItems().map((vi) => {
          const n = vi.index + 1;
          const ds = byLine.get(n);
          const worst = ds?.some((d) => d.severity === 'error') ? 'error' : ds ? 'warning' : null;
          const focused = focus?.line === n;
          const text = lines[vi.index];
          const col = ds?.find((d) => d.column !== null)?.column ?? null;
          let body: React.ReactNode = text || ' ';
          if (col !== null && col >= 1 && col <= text.length) {
            const start = col - 1;
            const m = /^[^\s,:{}[\]]+/.exec(text.slice(start));
            const end = start + Math.max(1, m ? m[0].length : 1);
            body = (
              <>
                {text.slice(0, start)}
                <span className={`underline decoration-wavy underline-offset-4 ${worst === 'error' ? 'decoration-error-100' : 'decoration-warn-100'}`}>{text.slice(start, end)}</span>
                {text.slice(end)}
              </>
            );
          }
          return (
            <div
              key={vi.index}
              data-line={n}
              data-marked={worst ?? undefined}
              data-focused={focused || undefined}
              className={`absolute left-0 flex w-max min-w-full items-center whitespace-pre ${
                worst === 'error' ? 'bg-error-600/35' : worst === 'warning' ? 'bg-warn-600/30' : ''
              } ${focused ? 'outline-2 -outline-offset-2 outline-ember-500' : ''}`}
              style={{ top: vi.start, height: LINE }}
              title={ds?.map((d) => `${d.severity}: ${d.message}`).join('\n')}
            >
              <span className="sticky left-0 inline-flex h-full shrink-0 items-center justify-end gap-1 bg-ink-900 pr-2 pl-1 text-right text-ink-400 select-none" style={{ width: `${gutter + 3.2}ch` }}>
                {worst && (
                  <span className={worst === 'error' ? 'text-error-100' : 'text-warn-100'}>
                    <SeverityIcon severity={worst} size={11} />
                  </span>
                )}
                {n}
              </span>
              <code className="px-3">{body}</code>
              {ds && <span className="sr-only">{ds.map((d) => `${d.severity}: ${d.message}`).join('; ')}</span>}
            </div>
          );
        })}
      </div>
    </div>
  );
}
