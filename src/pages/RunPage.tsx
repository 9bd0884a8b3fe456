import { Link, useParams, useSearchParams } from 'react-router-dom';
import { useRun } from '../api/hooks';
import { downloadUrl } from '../api/client';
import { rtlUnavailable } from '../../shared/hardware/rtlAvailable';
import { hostFileUrl } from '../../shared/report/hostLinks';
import { ComparisonPanel } from '../components/ComparisonPanel';
import { DesignReportView } from '../components/DesignReportView';
import { HardwareCard } from '../components/HardwareCard';
import { PlanActions } from '../components/PlanActions';
import { can } from '../api/roles';
import { useProjectContext } from '../components/ProjectLayout';
import { PageHeader, Panel, buttonClass } from '../components/Panel';
import { StatusBadge, StatusIcon } from '../components/StatusBadge';
import { EmptyState, ErrorState, Loading } from '../components/States';
import { ago, dateTime, shortCommit } from '../components/format';
import { to } from '../links';
import type { DesignReport } from '../api/types';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function RunPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Run ${useParams().id} · ${project.name}`);
  const id = Number(useParams().id);
  const [params, setParams] = useSearchParams();
  const q = useRun(id);

  if (!Number.isInteger(id) || id <= 0) return <EmptyState title="This is not a run number" />;
  if (q.isPending) return <Loading label="Loading the run…" />;
  if (q.error || !q.data) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;

  const { run, comparison, report } = q.data;
  const designs = report.designs;
  // A design is chosen by name (or by file for an invalid one without a name). By default the one
  // that got worse against the base (what this commit changed), else the first that did not pass.
  const wanted = params.get('design');
  const keyOf = (d: (typeof designs)[number]) => d.name ?? d.file;
  const regressed = comparison.designs.filter((d) => d.regressions.length > 0).map((d) => d.name);
  const firstRegressed = designs.findIndex((d) => regressed.includes(keyOf(d)));
  const index = Math.max(
    0,
    wanted !== null ? designs.findIndex((d) => keyOf(d) === wanted) : firstRegressed >= 0 ? firstRegressed : designs.findIndex((d) => d.status !== 'pass'),
  );
  const selected = designs[index];
  const select = (name: string) => {
    const next = new URLSearchParams(params);
    next.set('design', name);
    setParams(next, { replace: true });
  };
  const delta = selected && comparison.designs.find((d) => d.name === (selected.name ?? selected.file));

  return (
    <div>
      <PageHeader
        eyebrow={
          <Link to={to.branch(project.slug, run.branch)} className="hover:underline">
            ← {run.branch}
          </Link>
        }
        actions={
          <a className={buttonClass.secondary} href={downloadUrl(run.id, 'report.json')} download data-download="report.json">
            Download the report (JSON)
          </a>
        }
        title={
          <span className="inline-flex flex-wrap items-center gap-3">
            Run of {shortCommit(run.commit)}
            <StatusBadge status={run.verdict} size="lg" />
          </span>
        }
      >
        <span className="text-sm text-ink-600">
          {run.branch} · commit <span className="font-medium text-ink-800">{run.commit}</span> · uploaded {ago(run.createdAt)}
          {ago(run.createdAt) !== dateTime(run.createdAt) ? ` (${dateTime(run.createdAt)})` : ''} · pleat{' '}
          {run.toolVersion}
        </span>
      </PageHeader>

      <Panel id="run-changes" title={`Changes against ${comparison.baseBranch}`} className="mb-6">
        <ComparisonPanel comparison={comparison} slug={project.slug} onSelectDesign={select} />
      </Panel>

      {designs.length === 0 ? (
        <EmptyState title="This run has no designs" />
      ) : (
        <div className="grid gap-6 lg:grid-cols-[15rem_minmax(0,1fr)] 2xl:grid-cols-[18rem_minmax(0,1fr)]">
          <nav aria-label="Designs of this run" className="lg:sticky lg:top-20 lg:self-start">
            <h2 className="mb-2 text-xs font-medium tracking-wider text-ink-500 uppercase">
              Designs ({designs.length})
            </h2>
            <ul className="max-h-[70vh] space-y-1 overflow-y-auto">
              {designs.map((d, i) => {
                const key = d.name ?? d.file;
                const active = i === index;
                return (
                  <li key={`${d.file}-${i}`}>
                    <button
                      type="button"
                      onClick={() => select(key)}
                      aria-current={active ? 'true' : undefined}
                      className={`flex w-full items-start gap-2 rounded-lg px-3 py-2 text-left text-sm ${
                        active ? 'bg-ink-900 text-white' : 'text-ink-800 hover:bg-ink-100'
                      }`}
                    >
                      <span
                        className={`mt-0.5 rounded-sm ${active ? 'bg-white p-px' : ''} ${d.status === 'pass' ? 'text-pass-600' : d.status === 'fail' ? 'text-fail-600' : 'text-error-600'}`}
                      >
                        <StatusIcon status={d.status} />
                      </span>
                      <span className="min-w-0 flex-1">
                        <span className="block truncate font-medium">{d.name ?? d.file}</span>
                        <span className={`block truncate text-xs ${active ? 'text-ink-300' : 'text-ink-500'}`}>
                          <span className="sr-only">{d.status}, </span>
                          {d.status === 'error'
                            ? `${d.diagnostics.filter((x) => x.severity === 'error').length} error(s)`
                            : `${d.violations.length} violation${d.violations.length === 1 ? '' : 's'}`}
                          {' · '}
                          {d.file}
                        </span>
                      </span>
                    </button>
                  </li>
                );
              })}
            </ul>
          </nav>
          <div className="min-w-0">
            {selected && can.startJob(project.role) && (
              <Panel id="run-plan" title="Plan this design" className="mb-6"
                subtitle={(selected as { source?: string }).source ? 'The planner finds folding sets for this design as the run uploaded it.' : 'This run was uploaded without the text of its designs, so it cannot be planned here.'}>
                {(selected as { source?: string }).source && selected.name ? (
                  <PlanActions slug={project.slug} design={{ runId: run.id, name: selected.name }} factor={selected.factor ?? null} />
                ) : null}
              </Panel>
            )}
            {selected && <DesignFiles runId={run.id} design={selected} />}
            {selected?.hardware && <HardwareCard summary={selected.hardware} />}
            {selected && (
              <DesignReportView
                source={(selected as { source?: string }).source}
                hostLink={project.host ? (line) => hostFileUrl(project.host!, run.commit, selected.file, line) : undefined}
                key={`${selected.file}-${index}`}
                design={selected}
                rules={report.rules}
                changes={
                  comparison.baseRun ? (
                    delta ? (
                      <ComparisonPanel comparison={comparison} slug={project.slug} design={delta.name} />
                    ) : (
                      <p className="text-sm text-ink-600">This design is new: the base run does not have it.</p>
                    )
                  ) : undefined
                }
              />
            )}
          </div>
        </div>
      )}
    </div>
  );
}

/** One design's files: edges and control schedule as CSV, and the RTL when the plan can be built. */
function DesignFiles({ runId, design }: { runId: number; design: DesignReport }) {
  const name = design.name ?? design.file;
  const noRtl = rtlUnavailable(design);
  const link = 'inline-flex items-center gap-1.5 rounded-lg border border-ink-200 bg-white px-3 py-1.5 text-sm font-medium text-ink-800 hover:border-ember-600 hover:text-ember-800';
  return (
    <div className="mb-4 flex flex-wrap items-center gap-2" role="group" aria-label={`Files of ${name}`} data-testid="design-files">
      {design.status !== 'error' && (
        <>
          <a className={link} href={downloadUrl(runId, 'edges.csv', name)} download data-download="edges.csv">
            Edges (CSV)
          </a>
          <a className={link} href={downloadUrl(runId, 'schedule.csv', name)} download data-download="schedule.csv">
            Control schedule (CSV)
          </a>
        </>
      )}
      {noRtl === null ? (
        <a className={link} href={downloadUrl(runId, 'rtl.zip', name)} download data-download="rtl.zip">
          Verilog of the folded datapath (zip)
        </a>
      ) : (
        <span className="text-xs text-ink-600" data-no-rtl>
          No RTL: {noRtl}
        </span>
      )}
    </div>
  );
}
