import type { Diagnostic } from '../../shared/types';
import { SeverityBadge } from './StatusBadge';

/**
 * Validation findings with their position. When `onSelect` is given (the try-a-design page has
 * the file at hand), each position is a button that shows that line of the file.
 */
export function DiagnosticsList({ diagnostics, file, onSelect }: { diagnostics: Diagnostic[]; file?: string; onSelect?: (d: Diagnostic) => void }) {
  if (diagnostics.length === 0) return <p className="text-sm text-ink-600">No findings: the file is valid and raises no warning.</p>;
  return (
    <ul className="divide-y divide-ink-100 rounded-lg border border-ink-200" aria-label="Findings in the design file">
      {diagnostics.map((d, i) => {
        const where = d.line !== null ? `${file ? `${file}:` : 'line '}${d.line}${d.column !== null ? `:${d.column}` : ''}` : file ?? 'whole file';
        return (
          <li key={i} className="flex flex-wrap items-start gap-x-3 gap-y-1 px-3 py-2 text-sm" data-code={d.code} data-line={d.line ?? undefined}>
            <SeverityBadge severity={d.severity} />
            <span className="min-w-0 flex-1">
              <span className="text-ink-900">{d.message}</span>
              <span className="ml-2 text-xs text-ink-500">{d.code}</span>
            </span>
            {onSelect && d.line !== null ? (
              <button type="button" onClick={() => onSelect(d)} className="text-xs font-medium text-ember-700 underline underline-offset-2" aria-label={`Show ${where} in the file`}>
                {where}
              </button>
            ) : (
              <span className="text-xs text-ink-600">{where}</span>
            )}
          </li>
        );
      })}
    </ul>
  );
}
