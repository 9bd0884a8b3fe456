import { useMemo, useState } from 'react';
import { Link, useParams, useSearchParams } from 'react-router-dom';
import { useBranches, useRunPage } from '../api/hooks';
import { can } from '../api/roles';
import type { RunListItem } from '../api/types';
import { HistoryCharts, type HistoryPoint } from '../components/HistoryCharts';
import { useProjectContext } from '../components/ProjectLayout';
import { PageHeader, buttonClass, inputClass, tableClass, ScrollRegion } from '../components/Panel';
import { StatusBadge } from '../components/StatusBadge';
import { EmptyState, ErrorState, Loading } from '../components/States';
import { ago, dateTime, pct, shortCommit } from '../components/format';
import { to } from '../links';
import { WatchButton } from './BranchesPage';
import { useDocumentTitle } from '../components/useDocumentTitle';

const PAGE = 15;
const CHART_RUNS = 100;

/** One run as a history point: the whole run, or one design of it when the history is filtered. */
function point(r: RunListItem, design: string | null): HistoryPoint {
  const d = design ? r.designs.find((x) => x.name === design) : undefined;
  if (d) return { runId: r.id, commit: r.commit, verdict: d.status, utilization: d.utilization, registerMinimum: d.registerMinimum, violations: d.violations, createdAt: r.createdAt };
  return {
    runId: r.id,
    commit: r.commit,
    verdict: r.verdict,
    utilization: r.summary.utilization,
    registerMinimum: r.summary.registerMinimum,
    violations: r.summary.violations,
    createdAt: r.createdAt,
  };
}

export default function BranchPage() {
  const { project } = useProjectContext();
  const branch = useParams()['*'] ?? '';
  useDocumentTitle(`${branch} · ${project.name}`);
  const [params, setParams] = useSearchParams();
  const design = params.get('design') || null;
  // Cursor paging: the stack holds the cursor of every page before the one shown.
  const [cursors, setCursors] = useState<(string | null)[]>([null]);
  const cursor = cursors[cursors.length - 1];

  const recent = useRunPage(project.slug, branch, design, null, CHART_RUNS);
  const page = useRunPage(project.slug, branch, design, cursor, PAGE);
  const branches = useBranches(project.slug);
  const info = branches.data?.branches.find((b) => b.name === branch);

  // Design names seen in the recent runs (unfiltered names come from the unfiltered query's data).
  const allRecent = useRunPage(project.slug, branch, null, null, CHART_RUNS);
  const designNames = useMemo(() => {
    const s = new Set<string>();
    for (const r of allRecent.data?.runs ?? []) for (const d of r.designs) s.add(d.name);
    if (design) s.add(design);
    return [...s].sort();
  }, [allRecent.data, design]);

  const chartPoints = useMemo(() => (recent.data ? [...recent.data.runs].reverse().map((r) => point(r, design)) : []), [recent.data, design]);

  const setDesign = (name: string) => {
    setCursors([null]);
    const next = new URLSearchParams(params);
    if (name) next.set('design', name);
    else next.delete('design');
    setParams(next, { replace: true });
  };

  return (
    <div>
      <PageHeader
        eyebrow={
          <Link to={to.project(project.slug)} className="hover:underline">
            ← All branches
          </Link>
        }
        title={
          <span className="inline-flex items-center gap-3">
            {branch}
            {info?.isBase && <span className="rounded bg-ink-100 px-2 py-0.5 text-sm font-medium text-ink-700">base</span>}
          </span>
        }
        actions={
          <>
            {info && can.watch(project.role) && <WatchButton slug={project.slug} branch={branch} watching={info.watching} />}
            <label className="flex items-center gap-2 text-sm text-ink-700">
              <span>Design</span>
              <select className={`${inputClass} w-60 py-1.5`} value={design ?? ''} onChange={(e) => setDesign(e.target.value)}>
                <option value="">All designs</option>
                {designNames.map((n) => (
                  <option key={n} value={n}>
                    {n}
                  </option>
                ))}
              </select>
            </label>
          </>
        }
      >
        History of the branch, newest run first{design ? `, for the design ${design}` : ''}.
      </PageHeader>

      <section aria-label="Trends" className="mb-8">
        {recent.isPending ? (
          <Loading label="Loading the trends…" />
        ) : recent.error ? (
          <ErrorState error={recent.error} onRetry={() => void recent.refetch()} />
        ) : chartPoints.length > 0 ? (
          <>
            <HistoryCharts points={chartPoints} />
            <p className="mt-2 text-xs text-ink-600">
              The last {chartPoints.length} run{chartPoints.length === 1 ? '' : 's'}, oldest on the left. {design ? '' : 'Utilization is the mean over the designs; registers are their sum. '}
              Dots: circle pass, diamond fail, square invalid.
            </p>
          </>
        ) : null}
      </section>

      <section aria-labelledby="runs-heading">
        <h2 id="runs-heading" className="mb-3 text-lg font-bold">
          Runs
        </h2>
        {page.isPending ? (
          <Loading label="Loading the runs…" />
        ) : page.error ? (
          <ErrorState error={page.error} onRetry={() => void page.refetch()} />
        ) : page.data.runs.length === 0 && cursors.length === 1 ? (
          <EmptyState title={design ? `No run of this branch has the design ${design}` : 'No run on this branch'}>
            {design ? (
              <button type="button" className="font-medium underline" onClick={() => setDesign('')}>
                Show all designs
              </button>
            ) : (
              'Runs appear here when CI uploads them.'
            )}
          </EmptyState>
        ) : (
          <>
            <ScrollRegion label={`Runs of ${branch}`} className={`rounded-xl border border-ink-200 bg-white ${page.isPlaceholderData ? 'opacity-60' : ''}`} aria-busy={page.isFetching}>
              <table className={tableClass.table} data-testid="runs-table">
                <caption className="sr-only">
                  Runs of {branch}
                  {design ? ` for ${design}` : ''}, page {cursors.length}
                </caption>
                <thead>
                  <tr>
                    <th scope="col" className={tableClass.th}>
                      Commit
                    </th>
                    <th scope="col" className={tableClass.th}>
                      Verdict
                    </th>
                    <th scope="col" className={tableClass.th}>
                      {design ? 'Design' : 'Designs'}
                    </th>
                    <th scope="col" className={`${tableClass.th} text-right`}>
                      Utilization
                    </th>
                    <th scope="col" className={`${tableClass.th} text-right`}>
                      Registers
                    </th>
                    <th scope="col" className={`${tableClass.th} text-right`}>
                      Violations
                    </th>
                    <th scope="col" className={tableClass.th}>
                      Uploaded
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {page.data.runs.map((r) => {
                    const p = point(r, design);
                    return (
                      <tr key={r.id} className="hover:bg-ink-50/60" data-run={r.id} data-commit={r.commit}>
                        <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                          <Link to={to.run(project.slug, r.id, design)} className="underline decoration-ink-300 underline-offset-4 hover:decoration-ember-600">
                            {shortCommit(r.commit)}
                          </Link>
                        </th>
                        <td className={tableClass.td}>
                          <StatusBadge status={p.verdict} size="sm" />
                        </td>
                        <td className={`${tableClass.td} text-ink-700`}>
                          {design ? (
                            design
                          ) : (
                            <>
                              {r.summary.designs} · <span className="text-ink-500">{r.summary.designs - r.summary.failed - r.summary.errors} pass</span>
                              {r.summary.failed > 0 && <span className="text-fail-700"> · {r.summary.failed} fail</span>}
                              {r.summary.errors > 0 && <span className="text-error-700"> · {r.summary.errors} invalid</span>}
                            </>
                          )}
                        </td>
                        <td className={`${tableClass.td} text-right`}>{pct(p.utilization)}</td>
                        <td className={`${tableClass.td} text-right`}>{p.registerMinimum ?? '—'}</td>
                        <td className={`${tableClass.td} text-right ${p.violations > 0 ? 'font-bold text-fail-700' : ''}`}>{p.violations}</td>
                        <td className={`${tableClass.td} whitespace-nowrap text-ink-700`} title={dateTime(r.createdAt)}>
                          {ago(r.createdAt)}
                        </td>
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </ScrollRegion>
            <nav aria-label="Pages of runs" className="mt-3 flex items-center justify-between gap-3">
              <button type="button" className={buttonClass.secondary} disabled={cursors.length === 1} onClick={() => setCursors((c) => c.slice(0, -1))}>
                ← Newer
              </button>
              <span className="text-sm text-ink-600" aria-live="polite">
                Page {cursors.length}
              </span>
              <button
                type="button"
                className={buttonClass.secondary}
                disabled={!page.data.nextCursor || page.isPlaceholderData}
                onClick={() => page.data.nextCursor && setCursors((c) => [...c, page.data.nextCursor])}
              >
                Older →
              </button>
            </nav>
          </>
        )}
      </section>
    </div>
  );
}
