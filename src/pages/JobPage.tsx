import { Link, useParams } from 'react-router-dom';
import { CartesianGrid, ResponsiveContainer, Scatter, ScatterChart, Tooltip, XAxis, YAxis, ZAxis } from 'recharts';
import { errorMessage } from '../api/client';
import { useCancelJob, useJob } from '../api/hooks';
import { can } from '../api/roles';
import type { CurrentPlan, JobDetail, JobPlan, JobPlanMetrics, JobStatus, JobSweepRow } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { PageHeader, Panel, Stat, buttonClass, tableClass, ColumnHeads } from '../components/Panel';
import { changedSlots, PlanGrid } from '../components/PlanGrid';
import { useProjectContext } from '../components/ProjectLayout';
import { EmptyState, ErrorState, Loading } from '../components/States';
import { ago, dateTime, pct } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';
import { to } from '../links';

const STATUS: Record<JobStatus, { label: string; className: string; mark: string }> = {
  queued: { label: 'Waiting for a worker', className: 'bg-ink-100 text-ink-800', mark: '○' },
  running: { label: 'Running', className: 'bg-ember-100 text-ember-800', mark: '◐' },
  done: { label: 'Done', className: 'bg-pass-100 text-pass-700', mark: '●' },
  failed: { label: 'Failed', className: 'bg-fail-100 text-fail-700', mark: '■' },
  cancelled: { label: 'Cancelled', className: 'bg-ink-100 text-ink-700', mark: '×' },
};

function JobStatusChip({ status }: { status: JobStatus }) {
  const s = STATUS[status];
  return (
    <span className={`inline-flex items-center gap-1.5 rounded-full px-3 py-1 text-sm font-medium ${s.className}`} data-testid="job-status">
      <span aria-hidden="true">{s.mark}</span>
      {s.label}
    </span>
  );
}

export default function JobPage() {
  const { project } = useProjectContext();
  const id = Number(useParams().id);
  useDocumentTitle(`Job ${id} · ${project.name}`);
  const q = useJob(id);
  if (!Number.isInteger(id) || id <= 0) return <EmptyState title="This is not a job number" />;
  if (q.isPending) return <Loading label="Loading the job…" />;
  if (q.error || !q.data) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;
  const job = q.data.job;
  const what = job.kind === 'plan' ? 'Plan' : 'Sweep';
  return (
    <div>
      <PageHeader
        eyebrow={
          <span className="flex flex-wrap gap-4"><Link to={to.jobs(project.slug)} className="hover:underline">← plans</Link>{job.design.runId ? (
            <Link to={to.run(project.slug, job.design.runId, job.design.name)} className="hover:underline">run {job.design.runId}</Link>
          ) : (
            <Link to={to.tryDesign(project.slug)} className="hover:underline">try a design</Link>
          )}</span>
        }
        title={<span className="inline-flex flex-wrap items-center gap-3">{what} of {job.design.name ?? job.design.file}<JobStatusChip status={job.status} /></span>}
      >
        <span className="text-sm text-ink-600">
          {job.design.file} · {job.kind === 'sweep' ? `N = ${job.params.factors?.join(', ')}` : job.params.factor ? `N = ${job.params.factor}` : 'the design\'s own N'} ·
          aim: {job.params.objective} · time limit {job.params.timeLimitSeconds} s · started {ago(job.createdAt)}
          {job.createdBy ? ` by ${job.createdBy.name}` : ''}
        </span>
      </PageHeader>
      {job.status === 'queued' || job.status === 'running' ? (
        <ProgressPanel job={job} canCancel={can.startJob(project.role)} />
      ) : job.status === 'failed' ? (
        <Panel title="The job failed" className="mb-6">
          <p className="text-fail-700" role="alert">{job.error}</p>
        </Panel>
      ) : job.status === 'cancelled' ? (
        <Panel title="The job was cancelled" className="mb-6">
          <p className="text-ink-700">No result was kept.</p>
        </Panel>
      ) : job.result?.kind === 'plan' ? (
        <PlanResultView plan={job.result.plan} current={job.result.current} plannedText={job.result.plannedText} file={job.design.file} />
      ) : job.result?.kind === 'sweep' ? (
        <SweepResultView rows={job.result.rows} />
      ) : null}
      <Attempts job={job} />
    </div>
  );
}

function ProgressPanel({ job, canCancel }: { job: JobDetail; canCancel: boolean }) {
  const cancel = useCancelJob(job.id);
  const p = job.progress;
  const fraction = p && p.total ? Math.min(1, (p.done ?? 0) / p.total) : null;
  return (
    <Panel
      title={job.status === 'queued' ? 'Waiting for a worker' : 'Planning'}
      subtitle={job.status === 'queued' ? 'The job is in the queue; a worker process takes it when one is free.' : 'The page follows the worker\'s progress.'}
      className="mb-6"
      actions={
        canCancel && (
          <button type="button" className={buttonClass.danger} disabled={cancel.isPending || job.cancelRequested} onClick={() => cancel.mutate()}>
            {job.cancelRequested ? 'Cancelling…' : 'Cancel'}
          </button>
        )
      }
    >
      <div role="status" aria-live="polite" data-testid="job-progress">
        <p className="text-ink-800">{p ? p.phase : job.status === 'queued' ? 'queued' : 'starting'}</p>
        {fraction !== null && (
          <div className="mt-2 flex items-center gap-3">
            <progress className="h-2 w-full max-w-md accent-ember-600" value={fraction} max={1} aria-label="Progress" />
            <span className="text-sm text-ink-600">{p!.done} of {p!.total}</span>
          </div>
        )}
      </div>
      <FormError error={cancel.error ? errorMessage(cancel.error) : null} />
    </Panel>
  );
}

function metricsLine(m: JobPlanMetrics | null) {
  return m ? `${m.registers} registers · ${m.muxInputs} multiplexer inputs · latency +${m.latencyAdded}` : 'not measurable';
}

function download(text: string, file: string) {
  const url = URL.createObjectURL(new Blob([text], { type: 'application/yaml' }));
  const a = document.createElement('a');
  a.href = url;
  a.download = file;
  a.click();
  setTimeout(() => URL.revokeObjectURL(url), 1000);
}

function PlanResultView({ plan, current, plannedText, file }: { plan: JobPlan; current: CurrentPlan | null; plannedText: string | null; file: string }) {
  if (plan.status === 'infeasible') {
    return (
      <Panel title="No plan exists with these units at this N" className="mb-6">
        <ul className="list-disc space-y-1 pl-5 text-ink-800">{plan.reasons.map((r) => <li key={r}>{r}</li>)}</ul>
        {plan.suggestion && (
          <p className="mt-3 text-ink-700">
            Smallest change that admits one:{' '}
            {plan.suggestion.factor !== undefined ? `N = ${plan.suggestion.factor}` : ''}
            {plan.suggestion.units ? ` units ${Object.entries(plan.suggestion.units).map(([k, n]) => `${k} × ${n}`).join(', ')}` : ''}
          </p>
        )}
      </Panel>
    );
  }
  const sameShape = current && current.factor === plan.factor;
  const changed = sameShape ? changedSlots(plan.units, plan.factor, plan.sets, current.sets).size : null;
  const m = plan.objective;
  return (
    <div className="mb-6 space-y-6" data-testid="plan-result">
      <dl className="grid gap-3 sm:grid-cols-2 lg:grid-cols-5">
        <Stat label="Result" value={plan.status === 'optimal' ? 'optimal' : plan.gapPercent !== null ? `gap ${plan.gapPercent.toFixed(1)} %` : 'feasible'} hint={plan.status === 'optimal' ? 'proven against the bound' : 'to the best bound found'} tone={plan.status === 'optimal' ? 'good' : undefined} />
        <Stat label="Registers" value={m?.registers ?? '–'} hint={plan.bound?.registers !== undefined ? `bound ${plan.bound.registers}` : current?.objective ? `design: ${current.objective.registers}` : undefined} />
        <Stat label="Multiplexer inputs" value={m?.muxInputs ?? '–'} hint={current?.objective ? `design: ${current.objective.muxInputs}` : undefined} />
        <Stat label="Latency added" value={m ? `+${m.latencyAdded}` : '–'} hint={current?.objective ? `design: +${current.objective.latencyAdded}` : undefined} />
        <Stat label="Folding factor" value={`N = ${plan.factor}`} hint={`${plan.units.length} units · ${plan.seconds.toFixed(1)} s`} />
      </dl>
      <p className="text-sm text-ink-600">
        Found by {plan.method}.{plan.pins.length ? ` Kept as placed in the design (pins): ${plan.pins.join(', ')}.` : ''}{' '}
        A plan is an engineering aid, not a sign-off: check the planned file with <code>pleat check</code> before you rely on it.
      </p>
      <div className="grid gap-6 2xl:grid-cols-2">
        <Panel
          title="Planned"
          subtitle={changed !== null ? `${changed} slot${changed === 1 ? '' : 's'} changed against the design's own plan (marked)` : metricsLine(m)}
          actions={plannedText && (
            <button type="button" className={buttonClass.primary} onClick={() => download(plannedText, file)}>
              Download the planned design
            </button>
          )}
        >
          <PlanGrid units={plan.units} factor={plan.factor} sets={plan.sets} other={sameShape ? current.sets : null} label="Planned folding sets" testId="planned-grid" />
        </Panel>
        <Panel title="The design's own plan" subtitle={current ? metricsLine(current.objective) : undefined}>
          {current ? (
            <PlanGrid units={current.units} factor={current.factor} sets={current.sets} other={null} label="The design's folding sets" testId="current-grid" />
          ) : (
            <p className="text-sm text-ink-600">The design had no complete folding sets of its own.</p>
          )}
        </Panel>
      </div>
      {plan.notes && plan.notes.length > 0 && (
        <details className="text-sm text-ink-700">
          <summary className="cursor-pointer font-medium">How the plan was reached</summary>
          <ul className="mt-2 list-disc space-y-1 pl-5">{plan.notes.map((n) => <li key={n}>{n}</li>)}</ul>
        </details>
      )}
    </div>
  );
}

const axis = { fontSize: 11, fill: '#4b5280' };

/** A Pareto point is a diamond, the others circles: the chart does not rely on colour. */
function SweepDot(props: { cx?: number; cy?: number; payload?: { pareto: boolean } }) {
  const { cx, cy, payload } = props;
  if (cx === undefined || cy === undefined || !payload) return <g />;
  return payload.pareto
    ? <path d={`M${cx} ${cy - 7}L${cx + 7} ${cy}L${cx} ${cy + 7}L${cx - 7} ${cy}Z`} fill="#c4551a" stroke="#fff" />
    : <circle cx={cx} cy={cy} r={5} fill="#8b91b7" stroke="#fff" />;
}

function SweepResultView({ rows }: { rows: JobSweepRow[] }) {
  const total = (r: JobSweepRow) => Object.values(r.units).reduce((a, b) => a + b, 0);
  const planned = rows.filter((r) => r.plan.objective);
  const byPeriod = planned.every((r) => r.samplePeriodNs !== null);
  const data = planned.map((r) => ({ x: byPeriod ? r.samplePeriodNs! : r.factor, registers: r.plan.objective!.registers, units: total(r), factor: r.factor, pareto: r.pareto }));
  const front = rows.filter((r) => r.pareto).map((r) => `N = ${r.factor}`).join(', ');
  return (
    <div className="mb-6 space-y-6" data-testid="sweep-result">
      <figure className="rounded-xl border border-ink-200 bg-white p-4" aria-label={`Registers against ${byPeriod ? 'sample period' : 'folding factor'}; the Pareto front over units, registers and sample period: ${front || 'none'}`}>
        <figcaption className="mb-2 flex flex-wrap items-baseline justify-between gap-2">
          <span className="text-sm font-bold text-ink-900">Registers against {byPeriod ? 'sample period (ns)' : 'folding factor'}</span>
          <span className="text-xs text-ink-600">diamonds: the Pareto front over units, registers and sample period</span>
        </figcaption>
        <div className="h-64" aria-hidden="true">
          <ResponsiveContainer width="100%" height="100%">
            <ScatterChart accessibilityLayer={false} margin={{ top: 8, right: 16, bottom: 8, left: -8 }}>
              <CartesianGrid stroke="#e9ebf4" />
              <XAxis type="number" dataKey="x" tick={axis} name={byPeriod ? 'sample period' : 'N'} unit={byPeriod ? ' ns' : ''} />
              <YAxis type="number" dataKey="registers" tick={axis} allowDecimals={false} name="registers" />
              <ZAxis type="number" dataKey="units" range={[60, 60]} name="units" />
              <Tooltip isAnimationActive={false} formatter={(v, n) => [v, n]} labelFormatter={() => ''} />
              <Scatter data={data} shape={<SweepDot />} isAnimationActive={false} />
            </ScatterChart>
          </ResponsiveContainer>
        </div>
      </figure>
      <div className="overflow-x-auto rounded-xl border border-ink-200 bg-white" tabIndex={0} role="region" aria-label="Sweep table (scrolls)">
        <table className={tableClass.table}>
          <caption className="sr-only">One row per folding factor tried: units, the best plan found and its measures</caption>
          <ColumnHeads columns={['N', 'Units', 'Utilization', 'Registers', 'Mux inputs', 'Latency', 'Sample period', 'Result', 'Pareto']} />
          <tbody>
            {rows.map((r) => (
              <tr key={r.factor} className={r.pareto ? 'bg-ember-50' : undefined}>
                <td className={tableClass.td}>{r.factor}</td>
                <td className={tableClass.td}>{Object.entries(r.units).map(([k, n]) => `${k} × ${n}`).join(', ')}</td>
                <td className={tableClass.td}>{r.utilization === null ? '–' : pct(r.utilization)}</td>
                <td className={tableClass.td}>{r.plan.objective?.registers ?? '–'}</td>
                <td className={tableClass.td}>{r.plan.objective?.muxInputs ?? '–'}</td>
                <td className={tableClass.td}>{r.plan.objective ? `+${r.plan.objective.latencyAdded}` : '–'}</td>
                <td className={tableClass.td}>{r.samplePeriodNs === null ? '–' : `${r.samplePeriodNs} ns`}</td>
                <td className={tableClass.td}>{r.plan.status === 'optimal' ? 'optimal' : r.plan.status === 'infeasible' ? 'no plan' : r.plan.gapPercent !== null ? `gap ${r.plan.gapPercent.toFixed(1)} %` : 'feasible'}</td>
                <td className={tableClass.td}>{r.pareto ? <span>◆ <span className="sr-only">on the front</span></span> : ''}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

function Attempts({ job }: { job: JobDetail }) {
  if (job.attempts.length === 0) return null;
  return (
    <Panel title="Attempts" subtitle="Each time a worker took the job. A worker that stopped answering is marked lost; the queue then gives the job to another.">
      <table className={tableClass.table}>
        <caption className="sr-only">Attempts of this job</caption>
        <ColumnHeads columns={['#', 'Worker', 'Outcome', 'Started', 'Ended', 'Note']} />
        <tbody>
          {job.attempts.map((a) => (
            <tr key={a.attempt}>
              <td className={tableClass.td}>{a.attempt}</td>
              <td className={tableClass.td}>{a.worker}</td>
              <td className={tableClass.td}>{a.outcome}</td>
              <td className={tableClass.td}>{dateTime(a.startedAt)}</td>
              <td className={tableClass.td}>{a.endedAt ? dateTime(a.endedAt) : '–'}</td>
              <td className={tableClass.td}>{a.message ?? ''}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </Panel>
  );
}
