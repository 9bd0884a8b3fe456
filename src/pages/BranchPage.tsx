import { useMemo } from 'react';
import { Link, useNavigate, useParams, useSearchParams } from 'react-router-dom';
import { useBranches, useRunPage } from '../api/hooks';
import { can } from '../api/roles';
import type { RunListItem } from '../api/types';
import { HistoryCharts, type DesignSeries, type HistoryPoint } from '../components/HistoryCharts';
import { HardwareTrends } from '../components/HardwareTrends';
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
/** Designs drawn one line each on the registers chart; more would be a tangle. */
const MAX_SERIES = 6;

/** One run as a history point: the whole run, or one design of it when the history is filtered. */
function point(r: RunListItem, design: string | null): HistoryPoint {
  const d = design ? r.designs.find((x) => x.name === design) : undefined;
  const meta = { runId: r.id, commit: r.commit, createdAt: r.createdAt, floor: r.utilizationFloor, message: r.message, author: r.author };
  if (d) return { ...meta, verdict: d.status, utilization: d.utilization, registerMinimum: d.registerMinimum, violations: d.violations };
  return { ...meta, verdict: r.verdict, utilization: r.summary.utilization, registerMinimum: r.summary.registerMinimum, violations: r.summary.violations };
}

/** The page number of the address (?page=), 1 when absent or not a page number. */
function pageOf(v: string | null): number {
  const n = Number(v);
  return Number.isInteger(n) && n >= 1 && n <= 66_000 ? n : 1;
}

export default function BranchPage() {
  const { project } = useProjectContext();
  const branch = useParams()['*'] ?? '';
  useDocumentTitle(`${branch} · ${project.name}`);
  const navigate = useNavigate();
  const [params, setParams] = useSearchParams();
  const design = params.get('design') || null;
  // The page is part of the address, so a page of the history can be linked and reloaded.
  const pageNumber = pageOf(params.get('page'));

  const recent = useRunPage(project.slug, branch, design, 0, CHART_RUNS);
  const page = useRunPage(project.slug, branch, design, (pageNumber - 1) * PAGE, PAGE);
  const branches = useBranches(project.slug);
  const info = branches.data?.branches.find((b) => b.name === branch);
  const baseBranch = branches.data?.baseBranch ?? project.baseBranch;
  const isBase = branch === baseBranch;
  // The base branch over the same period, drawn under this branch's lines.
  const baseRecent = useRunPage(project.slug, baseBranch, design, 0, CHART_RUNS, !isBase);

  // Design names seen in the recent runs (unfiltered names come from the unfiltered query's data).
  const allRecent = useRunPage(project.slug, branch, null, 0, CHART_RUNS);
  const designNames = useMemo(() => {
    const s = new Set<string>();
    for (const r of allRecent.data?.runs ?? []) for (const d of r.designs) s.add(d.name);
    if (design) s.add(design);
    return [...s].sort();
  }, [allRecent.data, design]);

  const oldestFirst = useMemo(() => (recent.data ? [...recent.data.runs].reverse() : []), [recent.data]);
  const chartPoints = useMemo(() => oldestFirst.map((r) => point(r, design)), [oldestFirst, design]);
  const basePoints = useMemo(() => (baseRecent.data && !isBase ? [...baseRecent.data.runs].reverse().map((r) => point(r, design)) : []), [baseRecent.data, isBase, design]);
  // Registers per design: a sum over the designs hides which one grew. The designs of the latest run first.
  const registerSeries = useMemo((): DesignSeries[] | undefined => {
    if (design || oldestFirst.length === 0) return undefined;
    const names: string[] = [];
    for (const r of [...oldestFirst].reverse()) for (const d of r.designs) if (!names.includes(d.name) && d.registerMinimum !== null) names.push(d.name);
    return names.slice(0, MAX_SERIES).map((name) => ({ name, values: oldestFirst.map((r) => r.designs.find((d) => d.name === name)?.registerMinimum ?? null) }));
  }, [oldestFirst, design]);
  const hiddenSeries = design ? 0 : Math.max(0, designNames.length - MAX_SERIES);

  const setParam = (name: string, value: string | null, replace: boolean) => {
    const next = new URLSearchParams(params);
    if (value) next.set(name, value);
    else next.delete(name);
    if (name !== 'page') next.delete('page');
    setParams(next, { replace });
  };
  const setDesign = (name: string) => setParam('design', name || null, true);
  const goToPage = (n: number) => setParam('page', n > 1 ? String(n) : null, false);

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
            <span className="flex items-center gap-2 text-sm text-ink-700">
              <label htmlFor="branch-design">Design</label>
              <select id="branch-design" className={`${inputClass} w-60 py-1.5`} value={design ?? ''} onChange={(e) => setDesign(e.target.value)}>
                <option value="">All designs</option>
                {designNames.map((n) => (
                  <option key={n} value={n}>
                    {n}
                  </option>
                ))}
              </select>
            </span>
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
            <HistoryCharts
              points={chartPoints}
              base={isBase ? null : { name: baseBranch, points: basePoints }}
              registers={registerSeries}
              onOpenRun={(id) => navigate(to.run(project.slug, id, design))}
            />
            <p className="mt-2 text-xs text-ink-600">
              The last {chartPoints.length} run{chartPoints.length === 1 ? '' : 's'}, oldest on the left{isBase ? '' : `, with ${baseBranch} over the same days in grey`}.{' '}
              {design ? '' : `Utilization is the mean over the designs; registers are drawn per design${hiddenSeries ? ` (the ${MAX_SERIES} of the latest run; choose a design above for the others)` : ''}. `}
              The dashed line is the utilization floor the runs were checked against. Dots: circle pass, diamond fail, square invalid; a dot opens its run.
            </p>
            <HardwareTrends runs={oldestFirst} maxSeries={MAX_SERIES} />
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
        ) : page.data.runs.length === 0 && pageNumber === 1 ? (
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
                  {design ? ` for ${design}` : ''}, page {pageNumber}
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
                        <th scope="row" className={`${tableClass.td} max-w-[28rem] text-left font-medium`}>
                          <Link to={to.run(project.slug, r.id, design)} className="underline decoration-ink-300 underline-offset-4 hover:decoration-ember-600">
                            {shortCommit(r.commit)}
                          </Link>
                          {(r.message || r.author) && (
                            <span className="block truncate text-xs font-normal text-ink-600" data-commit-meta>
                              {r.message && <span className="text-ink-800">{r.message}</span>}
                              {r.message && r.author ? ' · ' : ''}
                              {r.author}
                            </span>
                          )}
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
              <button type="button" className={buttonClass.secondary} disabled={pageNumber === 1} onClick={() => goToPage(pageNumber - 1)}>
                ← Newer
              </button>
              <span className="text-sm text-ink-600" aria-live="polite">
                Page {pageNumber}
              </span>
              <button type="button" className={buttonClass.secondary} disabled={!page.data.nextCursor || page.isPlaceholderData} onClick={() => goToPage(pageNumber + 1)}>
                Older →
              </button>
            </nav>
          </>
        )}
      </section>
    </div>
  );
}
