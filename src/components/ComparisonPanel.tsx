import { Link } from 'react-router-dom';
import type { Comparison, DesignDelta, Metric, Regression } from '../api/types';
import { StatusBadge } from './StatusBadge';
import { dateTime, pct, shortCommit } from './format';
import { ColumnHeads, tableClass, ScrollRegion } from './Panel';

const regressionLabel: Record<Regression, string> = {
  status: 'no longer passes',
  utilization: 'utilization dropped',
  registerMinimum: 'more registers',
  violations: 'more violations',
};

/** How the base run was chosen, in words. */
export function basisText(c: Comparison): string {
  if (c.basis === 'merge-base' && c.baseRun) return `Compared with ${c.baseBranch} at the merge-base commit ${shortCommit(c.baseRun.commit)}.`;
  if (c.basis === 'nearest-earlier' && c.baseRun)
    return `No run of ${c.baseBranch} at the merge-base, so compared with the latest run of ${c.baseBranch} before this one (${shortCommit(c.baseRun.commit)}, ${dateTime(c.baseRun.createdAt)}).`;
  return `There is no earlier run of ${c.baseBranch} to compare with.`;
}

function Delta({ m, kind, better }: { m: Metric; kind: 'pct' | 'int'; better: 'up' | 'down' }) {
  const fmt = (v: number | null) => (v === null ? '—' : kind === 'pct' ? pct(v) : String(v));
  if (m.delta === null || m.delta === 0)
    return (
      <span>
        {fmt(m.current)}
        {m.delta === 0 && <span className="ml-1 text-xs text-ink-500">(same)</span>}
      </span>
    );
  const worse = better === 'up' ? m.delta < 0 : m.delta > 0;
  const sign = m.delta > 0 ? '+' : '−';
  const abs = Math.abs(m.delta);
  return (
    <span>
      {fmt(m.current)}{' '}
      <span className={`text-xs font-medium ${worse ? 'text-fail-700' : 'text-pass-700'}`}>
        <span aria-hidden="true">{m.delta > 0 ? '▲' : '▼'}</span> {sign}
        {kind === 'pct' ? `${(abs * 100).toFixed(1).replace(/\.0$/, '')} pts` : abs}
        <span className="sr-only">{worse ? ' (worse)' : ' (better)'}</span>
      </span>
      <span className="block text-xs text-ink-500">was {fmt(m.base)}</span>
    </span>
  );
}

function Regressions({ d }: { d: DesignDelta }) {
  if (d.presence === 'added') return <span className="text-xs font-medium text-ink-600">new design</span>;
  if (d.presence === 'removed') return <span className="text-xs font-medium text-ink-600">removed</span>;
  if (d.regressions.length === 0) return <span className="text-xs text-pass-700">no regression</span>;
  return (
    <ul className="flex flex-wrap gap-1">
      {d.regressions.map((r) => (
        <li key={r} className="inline-flex items-center gap-1 rounded bg-fail-100 px-1.5 py-0.5 text-xs font-medium text-fail-700">
          <svg width="9" height="9" viewBox="0 0 12 12" aria-hidden="true">
            <path d="M1 2H11L6 11Z" fill="currentColor" />
          </svg>
          {regressionLabel[r]}
        </li>
      ))}
    </ul>
  );
}

/**
 * What changed against the base branch's run. With `design`, only that design's line (the design
 * view shows it); without, every design of the run, removed ones included.
 */
export function ComparisonPanel({ comparison: c, slug, design, onSelectDesign }: { comparison: Comparison; slug: string; design?: string; onSelectDesign?: (name: string) => void }) {
  const rows = design ? c.designs.filter((d) => d.name === design) : c.designs;
  return (
    <div className="space-y-3" data-testid="comparison" data-basis={c.basis}>
      {!design && (
      <p className="text-sm text-ink-700">
        {basisText(c)}{' '}
        {c.baseRun && (
          <Link to={`/projects/${encodeURIComponent(slug)}/runs/${c.baseRun.id}`} className="font-medium text-ember-700 underline underline-offset-2">
            Open the base run
          </Link>
        )}
      </p>
      )}
      {c.baseRun && rows.length === 0 && <p className="text-sm text-ink-600">The base run has no design of this name.</p>}
      {rows.length > 0 && (
        <ScrollRegion label="Changes of each design against the base run" className="rounded-lg border border-ink-200">
          <table className={tableClass.table}>
            <caption className="sr-only">Changes of each design against the base run</caption>
            <ColumnHeads columns={['Design', 'Status (base → now)', 'Utilization', 'Registers', 'Violations', `Beyond tolerance (${pct(c.tolerance, 0)})`]} />
            <tbody>
              {rows.map((d) => (
                <tr key={`${d.name}-${d.presence}`} data-regressed={d.regressions.length > 0 || undefined}>
                  <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                    {onSelectDesign && d.presence !== 'removed' ? (
                      <button type="button" className="underline decoration-ink-300 underline-offset-4 hover:decoration-ember-600" onClick={() => onSelectDesign(d.name)}>
                        {d.name}
                      </button>
                    ) : (
                      d.name
                    )}
                  </th>
                  <td className={tableClass.td}>
                    <span className="inline-flex items-center gap-1.5">
                      {d.baseStatus ? <StatusBadge status={d.baseStatus} size="sm" /> : <span className="text-xs text-ink-500">none</span>}
                      <span aria-label="then">→</span>
                      {d.status ? <StatusBadge status={d.status} size="sm" /> : <span className="text-xs text-ink-500">none</span>}
                    </span>
                  </td>
                  <td className={tableClass.td}>
                    <Delta m={d.utilization} kind="pct" better="up" />
                  </td>
                  <td className={tableClass.td}>
                    <Delta m={d.registerMinimum} kind="int" better="down" />
                  </td>
                  <td className={tableClass.td}>
                    <Delta m={d.violations} kind="int" better="down" />
                  </td>
                  <td className={tableClass.td}>
                    <Regressions d={d} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </ScrollRegion>
      )}
    </div>
  );
}
