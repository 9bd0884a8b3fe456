import type { RuleName, RuleSource, Violation } from '../api/types';
import { StatusIcon } from './StatusBadge';
import { pct } from './format';

export const ruleLabel: Record<RuleName, string> = {
  negative_delays: 'Negative folded delays',
  min_utilization: 'Design utilization floor',
  min_unit_utilization: 'Unit utilization floor',
  max_registers: 'Register ceiling',
};

export const sourceLabel: Record<RuleSource, string> = {
  team: 'team rule',
  repository: 'repository rule',
  default: 'default',
};

export function SourceTag({ source }: { source: RuleSource }) {
  const cls =
    source === 'team'
      ? 'border-ember-600/40 bg-ember-50 text-ember-800'
      : source === 'repository'
        ? 'border-ink-400 bg-ink-50 text-ink-800'
        : 'border-ink-200 bg-white text-ink-600';
  return <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium ${cls}`}>{sourceLabel[source]}</span>;
}

export function formatRuleValue(rule: RuleName, v: number | string): string {
  if (typeof v === 'number' && (rule === 'min_utilization' || rule === 'min_unit_utilization')) return pct(v);
  return String(v);
}

/** `file:line:column` of a violation the pipeline placed, or null. */
export function violationWhere(v: Violation, file?: string): string | null {
  if (v.line == null) return null;
  return `${file ? `${file}:` : 'line '}${v.line}${v.column != null ? `:${v.column}` : ''}`;
}

/**
 * The rules a design broke, each with the limit, the actual value and where the rule came from.
 * A placed violation names its file:line:column; with `onSelect` (a page that shows the file) the
 * position is a button that goes to that line.
 */
export function ViolationsList({
  violations,
  file,
  onSelect,
  hostHref,
}: {
  violations: Violation[];
  file?: string;
  onSelect?: (v: Violation) => void;
  /** The line on the git host's file view at the run's commit (a connected project's run page). */
  hostHref?: (v: Violation) => string | null;
}) {
  if (violations.length === 0)
    return (
      <p className="flex items-center gap-2 text-sm text-pass-700">
        <StatusIcon status="pass" /> Every rule in force holds.
      </p>
    );
  return (
    <ul className="space-y-2" aria-label="Broken rules">
      {violations.map((v, i) => (
        <li key={i} className="flex gap-3 rounded-lg border border-fail-600/25 bg-fail-100/40 px-3 py-2" data-rule={v.rule} data-source={v.source}>
          <span className="mt-0.5 text-fail-600">
            <StatusIcon status="fail" />
          </span>
          <div className="min-w-0 flex-1 text-sm">
            <div className="flex flex-wrap items-center gap-2">
              <span className="font-bold text-ink-900">{ruleLabel[v.rule] ?? v.rule}</span>
              {v.unit && <span className="rounded bg-white px-1.5 py-0.5 text-xs font-medium ring-1 ring-ink-200">{v.unit}</span>}
              <SourceTag source={v.source} />
            </div>
            <p className="mt-0.5 text-ink-800">{v.message}</p>
            <p className="mt-0.5 text-xs text-ink-600">
              limit {formatRuleValue(v.rule, v.limit)} · actual {formatRuleValue(v.rule, v.actual)}
              {violationWhere(v, file) && (
                <>
                  {' · '}
                  {onSelect ? (
                    <button type="button" data-where className="font-medium text-ember-700 underline underline-offset-2" onClick={() => onSelect(v)} aria-label={`Show ${violationWhere(v, file)} in the file`}>
                      {violationWhere(v, file)}
                    </button>
                  ) : (
                    <span data-where>{violationWhere(v, file)}</span>
                  )}
                  {hostHref?.(v) && (
                    <>
                      {' · '}
                      <a data-host-link href={hostHref(v)!} rel="noreferrer" className="font-medium text-ember-700 underline underline-offset-2">
                        at this commit in the repository
                      </a>
                    </>
                  )}
                </>
              )}
            </p>
          </div>
        </li>
      ))}
    </ul>
  );
}
