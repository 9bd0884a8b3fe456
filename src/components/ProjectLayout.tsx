import { NavLink, Outlet, useLocation, useOutletContext, useParams } from 'react-router-dom';
import { useProject } from '../api/hooks';
import { can } from '../api/roles';
import type { HostStatus, Project } from '../api/types';
import { to } from '../links';
import { ago, dateTime } from './format';
import { ErrorState, Loading } from './States';

export interface ProjectContext {
  project: Project;
}

/** The project's own navigation; the tabs shown are the ones the caller's role may use. */
export function ProjectLayout() {
  const { slug = '' } = useParams();
  const q = useProject(slug);
  const { pathname } = useLocation();
  if (q.isPending) return <Loading label="Loading the project…" />;
  if (q.error || !q.data) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;
  const project = q.data.project;
  const tab = ({ isActive }: { isActive: boolean }) =>
    `-mb-px border-b-2 px-3 py-2 text-sm font-medium ${isActive ? 'border-ember-600 text-ink-950' : 'border-transparent text-ink-600 hover:border-ink-300 hover:text-ink-900'}`;
  return (
    <div>
      <div className="mb-6 flex flex-wrap items-end justify-between gap-x-6 gap-y-2 border-b border-ink-200">
        <div className="pb-2">
          <div className="text-xs font-medium tracking-wider text-ink-500 uppercase">Project</div>
          <div className="text-lg font-bold text-ink-950">{project.name}</div>
        </div>
        <nav aria-label="Project" className="flex flex-wrap gap-1">
          {/* Branch histories and runs belong to the Branches tab. */}
          <NavLink end to={to.project(slug)} className={({ isActive }) => tab({ isActive: isActive || /\/(branches|runs)\//.test(pathname) })}>
            Branches
          </NavLink>
          <NavLink to={to.jobs(slug)} className={tab}>
            Plans
          </NavLink>
          <NavLink to={to.rules(slug)} className={tab}>
            Rules
          </NavLink>
          {can.manageTokens(project.role) && (
            <NavLink to={to.tokens(slug)} className={tab}>
              CI tokens
            </NavLink>
          )}
          {can.manageHost(project.role) && (
            <NavLink to={to.host(slug)} className={tab}>
              Git host
            </NavLink>
          )}
          {can.manageMembers(project.role) && (
            <NavLink to={to.members(slug)} className={tab}>
              Members
            </NavLink>
          )}
        </nav>
      </div>
      {project.host && <HostProblem host={project.host} />}
      <Outlet context={{ project } satisfies ProjectContext} />
    </div>
  );
}

/** The last failure of the pull-request feedback, while no success came after it. */
export function HostProblem({ host }: { host: HostStatus }) {
  if (!host.lastError || !host.lastErrorAt) return null;
  if (host.lastOkAt && Date.parse(host.lastOkAt) > Date.parse(host.lastErrorAt)) return null;
  return (
    <div role="status" className="mb-6 rounded-lg border border-ember-300 bg-ember-50 px-4 py-3 text-sm text-ember-900" data-testid="host-error">
      <span className="font-bold">The last pull-request feedback to {host.repository} failed</span>{' '}
      on{' '}
      <time dateTime={host.lastErrorAt}>
        {dateTime(host.lastErrorAt)} ({ago(host.lastErrorAt)})
      </time>
      : {host.lastError}. Uploads are stored all the same.
    </div>
  );
}

export function useProjectContext(): ProjectContext {
  return useOutletContext<ProjectContext>();
}
