import { Link } from 'react-router-dom';
import { errorMessage } from '../api/client';
import { useBranches, useWatch } from '../api/hooks';
import { can } from '../api/roles';
import type { Branch } from '../api/types';
import { useProjectContext } from '../components/ProjectLayout';
import { ColumnHeads, PageHeader, tableClass, ScrollRegion } from '../components/Panel';
import { Sparkline } from '../components/Sparkline';
import { StatusBadge } from '../components/StatusBadge';
import { EmptyState, QueryState } from '../components/States';
import { ago, dateTime, pct, shortCommit } from '../components/format';
import { to } from '../links';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function BranchesPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Branches of ${project.name}`);
  const branches = useBranches(project.slug);
  const mayWatch = can.watch(project.role);
  return (
    <div>
      <PageHeader title="Branches">
        The latest verdict of every branch, and how its last runs went (oldest to newest).
      </PageHeader>
      <QueryState query={branches} loadingLabel="Loading the branches…">
        {(data) =>
          data.branches.length === 0 ? (
            <EmptyState title="No run has been uploaded yet">
              CI uploads a run with <code className="rounded bg-ink-100 px-1">pleat check --upload</code> and a project token
              {can.manageTokens(project.role) ? (
                <>
                  {' '}
                  (create one under{' '}
                  <Link className="font-medium underline" to={to.tokens(project.slug)}>
                    CI tokens
                  </Link>
                  )
                </>
              ) : (
                ' that a lead creates'
              )}
              .
            </EmptyState>
          ) : (
            <ScrollRegion label="Branches" className="rounded-xl border border-ink-200 bg-white">
              <table className={tableClass.table}>
                <caption className="sr-only">Branches of {project.name} with their latest verdict and trends</caption>
                <ColumnHeads columns={['Branch', 'Latest verdict', 'Last run', 'Utilization', 'Registers', 'Violations', mayWatch && <span className="sr-only">Watch</span>]} />
                <tbody>
                  {data.branches.map((b) => (
                    <BranchRow key={b.name} slug={project.slug} branch={b} mayWatch={mayWatch} />
                  ))}
                </tbody>
              </table>
            </ScrollRegion>
          )
        }
      </QueryState>
    </div>
  );
}

function BranchRow({ slug, branch: b, mayWatch }: { slug: string; branch: Branch; mayWatch: boolean }) {
  const last = b.trend[b.trend.length - 1];
  return (
    <tr className="hover:bg-ink-50/60" data-branch={b.name}>
      <th scope="row" className={`${tableClass.td} text-left font-medium`}>
        <Link to={to.branch(slug, b.name)} className="text-ink-950 underline decoration-ink-300 underline-offset-4 hover:decoration-ember-600">
          {b.name}
        </Link>
        {b.isBase && <span className="ml-2 rounded bg-ink-100 px-1.5 py-0.5 text-xs font-medium text-ink-700">base</span>}
      </th>
      <td className={tableClass.td}>
        {b.latest ? (
          <Link to={to.run(slug, b.latest.id)} className="inline-flex items-center gap-2" aria-label={`Latest run of ${b.name}: ${b.latest.verdict}, commit ${shortCommit(b.latest.commit)}`}>
            <StatusBadge status={b.latest.verdict} />
            <span className="text-xs text-ink-600">{shortCommit(b.latest.commit)}</span>
          </Link>
        ) : (
          <span className="text-ink-500">no run</span>
        )}
      </td>
      <td className={`${tableClass.td} whitespace-nowrap text-ink-700`} title={dateTime(b.lastRunAt)}>
        {ago(b.lastRunAt)}
      </td>
      <td className={tableClass.td}>
        <div className="flex items-center gap-3">
          <Sparkline label={`Utilization of ${b.name}`} points={b.trend.map((t) => ({ value: t.utilization, status: t.verdict }))} format={(v) => pct(v)} />
          <span className="w-14 text-right text-sm">{pct(last?.utilization)}</span>
        </div>
      </td>
      <td className={tableClass.td}>
        <div className="flex items-center gap-3">
          <Sparkline label={`Register minimum of ${b.name}`} points={b.trend.map((t) => ({ value: t.registerMinimum, status: t.verdict }))} />
          <span className="w-10 text-right text-sm">{last?.registerMinimum ?? '—'}</span>
        </div>
      </td>
      <td className={tableClass.td}>
        <div className="flex items-center gap-3">
          <Sparkline label={`Violations on ${b.name}`} width={80} points={b.trend.map((t) => ({ value: t.violations, status: t.verdict }))} />
          <span className="w-8 text-right text-sm">{last?.violations ?? '—'}</span>
        </div>
      </td>
      {mayWatch && (
        <td className={`${tableClass.td} text-right`}>
          <WatchButton slug={slug} branch={b.name} watching={b.watching} />
        </td>
      )}
    </tr>
  );
}

export function WatchButton({ slug, branch, watching }: { slug: string; branch: string; watching: boolean }) {
  const watch = useWatch(slug);
  return (
    <span className="inline-flex items-center gap-2">
      <button
        type="button"
        aria-pressed={watching}
        disabled={watch.isPending}
        onClick={() => watch.mutate({ branch, watch: !watching })}
        title={watching ? 'You get e-mail when this branch breaks or regresses' : 'Get e-mail when this branch breaks or regresses'}
        className={`inline-flex items-center gap-1.5 rounded-md border px-2.5 py-1 text-xs font-medium whitespace-nowrap ${
          watching ? 'border-ember-600/50 bg-ember-50 text-ember-800' : 'border-ink-300 bg-white text-ink-700 hover:bg-ink-50'
        }`}
      >
        <svg width="12" height="12" viewBox="0 0 16 16" aria-hidden="true">
          <path
            d="M8 2C4.5 2 1.8 4.6 1 8c.8 3.4 3.5 6 7 6s6.2-2.6 7-6c-.8-3.4-3.5-6-7-6Zm0 9.5A3.5 3.5 0 1 1 8 4.5a3.5 3.5 0 0 1 0 7Z"
            fill={watching ? 'currentColor' : 'none'}
            stroke="currentColor"
            strokeWidth="1.3"
          />
        </svg>
        <span className="sr-only">{branch}: </span>
        {watching ? 'Watching' : 'Watch'}
      </button>
      {watch.error && (
        <span role="alert" className="text-xs text-fail-700">
          {errorMessage(watch.error)}
        </span>
      )}
    </span>
  );
}
