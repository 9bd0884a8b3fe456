import { Link } from 'react-router-dom';
import { useJobs } from '../api/hooks';
import { can } from '../api/roles';
import { ColumnHeads, PageHeader, tableClass } from '../components/Panel';
import { useProjectContext } from '../components/ProjectLayout';
import { EmptyState, ErrorState, Loading } from '../components/States';
import { ago } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';
import { to } from '../links';

/** The project's latest plan and sweep jobs, for every member; asked again while one is unfinished. */
export default function JobsPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Plans · ${project.name}`);
  const q = useJobs(project.slug);
  if (q.isPending) return <Loading label="Loading the plans…" />;
  if (q.error || !q.data) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;
  const jobs = q.data.jobs;
  return (
    <div>
      <PageHeader title="Plans and sweeps">
        The latest 50 jobs of this project.{' '}
        {can.startJob(project.role) ? 'Start one from a run\'s design or from "Try a design".' : 'Engineers and leads start them.'}
      </PageHeader>
      {jobs.length === 0 ? (
        <EmptyState title="No plans yet">A plan or a sweep started from a run or from "Try a design" appears here.</EmptyState>
      ) : (
        <div className="overflow-x-auto rounded-xl border border-ink-200 bg-white" tabIndex={0} role="region" aria-label="Jobs (scrolls)">
          <table className={tableClass.table} data-testid="job-list">
            <caption className="sr-only">Plan and sweep jobs of this project, newest first</caption>
            <ColumnHeads columns={['Job', 'Design', 'Status', 'Started by', 'When']} />
            <tbody>
              {jobs.map((j) => (
                <tr key={j.id}>
                  <td className={tableClass.td}>
                    <Link to={to.job(project.slug, j.id)} className="font-medium text-ember-700 hover:underline">
                      {j.kind === 'plan' ? 'Plan' : 'Sweep'} #{j.id}
                    </Link>
                  </td>
                  <td className={tableClass.td}>{j.design.name ?? j.design.file}</td>
                  <td className={tableClass.td}>{j.status}{j.progress && j.status === 'running' ? ` · ${j.progress.phase}` : ''}</td>
                  <td className={tableClass.td}>{j.createdBy?.name ?? '–'}</td>
                  <td className={tableClass.td}>{ago(j.createdAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
