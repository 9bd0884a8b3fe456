import { useEffect, useRef } from 'react';
import { Navigate, NavLink, Link, Outlet, ScrollRestoration, useLocation, useMatch, useNavigate } from 'react-router-dom';
import { ApiError } from '../api/client';
import { useMe, useProjects } from '../api/hooks';
import { can, roleIn, roleLabel } from '../api/roles';
import type { Me } from '../api/types';
import { to } from '../links';
import { Logo } from './Logo';
import { ErrorState, Loading } from './States';

/** The frame of every signed-in page: the top bar and the page below it. Signed-out people go to sign-in. */
export function Shell() {
  const me = useMe();
  const location = useLocation();
  // After a navigation inside the app, focus goes to the page so a screen reader reads the new
  // page from its start (not on the first load, where the browser does that itself).
  const firstPath = useRef(true);
  useEffect(() => {
    if (firstPath.current) {
      firstPath.current = false;
      return;
    }
    document.getElementById('main')?.focus({ preventScroll: true });
  }, [location.pathname]);
  if (me.isPending)
    return (
      <div className="mx-auto max-w-md px-6 py-24">
        <Logo className="text-ink-900" />
        <Loading label="Checking your session…" />
      </div>
    );
  if (me.error instanceof ApiError && me.error.isUnauthorized)
    return <Navigate to={to.signIn(location.pathname + location.search)} replace />;
  if (me.error || !me.data)
    return (
      <div className="mx-auto max-w-xl px-6 py-24">
        <Logo className="mb-6 text-ink-900" />
        <ErrorState error={me.error} onRetry={() => void me.refetch()} />
      </div>
    );
  return (
    <div className="min-h-screen">
      <a href="#main" className="sr-only focus:not-sr-only focus:fixed focus:top-2 focus:left-2 focus:z-50 focus:rounded focus:bg-white focus:px-3 focus:py-2 focus:text-ink-900">
        Skip to the page
      </a>
      <ScrollRestoration />
      <TopBar me={me.data} />
      <main id="main" tabIndex={-1} className="mx-auto w-full max-w-[1680px] px-4 pt-6 pb-16 outline-none sm:px-6 lg:px-8">
        <Outlet />
      </main>
      <footer className="mx-auto w-full max-w-[1680px] px-4 pb-8 text-xs text-ink-500 sm:px-6 lg:px-8">
        Pleat's verdicts are an engineering aid, not a sign-off: they check a folding plan against the
        equations of folding, not the safety or correctness of the hardware built from it.
      </footer>
    </div>
  );
}

function TopBar({ me }: { me: Me }) {
  const match = useMatch('/projects/:slug/*');
  const slug = match?.params.slug;
  const role = roleIn(me, slug);
  const navLink = ({ isActive }: { isActive: boolean }) =>
    `rounded-md px-3 py-1.5 text-sm font-medium ${isActive ? 'bg-white/15 text-white' : 'text-ink-200 hover:bg-white/10 hover:text-white'}`;
  return (
    <header className="sticky top-0 z-40 bg-ink-900 text-white shadow-[0_1px_0_rgba(0,0,0,.2)]">
      {/* On a phone the pages of the whole server take a second row, so the sign-out control stays on screen. */}
      <div className="mx-auto flex min-h-14 max-w-[1680px] flex-wrap items-center gap-x-4 gap-y-1 px-4 py-2 sm:flex-nowrap sm:px-6 sm:py-0 lg:px-8">
        <Link to={to.home()} className="shrink-0 rounded text-white" aria-label="Pleat, your projects">
          <Logo />
        </Link>
        <ProjectSwitcher current={slug} />
        {(can.tryDesign(me) || can.manageUsers(me)) && (
        <nav aria-label="Main" className="order-last flex w-full items-center gap-1 sm:order-none sm:ml-auto sm:w-auto">
          {can.tryDesign(me) && (
            <NavLink to={to.tryDesign(slug)} className={navLink}>
              Try a design
            </NavLink>
          )}
          {can.manageUsers(me) && (
            <NavLink to={to.users()} className={navLink}>
              Users
            </NavLink>
          )}
        </nav>
        )}
        <div className={`ml-auto flex shrink-0 items-center gap-3 ${can.tryDesign(me) || can.manageUsers(me) ? 'sm:ml-0 sm:border-l sm:border-white/15 sm:pl-4' : ''}`}>
          <div className="hidden text-right leading-tight sm:block" data-testid="whoami">
            <div className="text-sm font-medium">{me.user.name}</div>
            <div className="text-xs text-ink-300">
              {role ? (
                <>
                  <span className="sr-only">role: </span>
                  <span data-testid="current-role">{roleLabel[role]}</span>
                  {slug && role !== 'admin' ? ' in this project' : ''}
                </>
              ) : (
                <RoleSummary me={me} />
              )}
            </div>
          </div>
          <Link to={to.signOut()} className="rounded-md border border-white/20 px-3 py-1.5 text-sm font-medium whitespace-nowrap text-ink-100 hover:bg-white/10">
            Sign out
          </Link>
        </div>
      </div>
    </header>
  );
}

/** Outside a project: the person's highest role and in how many projects they are. */
function RoleSummary({ me }: { me: Me }) {
  const n = me.memberships.length;
  if (n === 0) return <>no project yet</>;
  const order = ['lead', 'engineer', 'viewer'] as const;
  const top = order.find((r) => me.memberships.some((m) => m.role === r))!;
  const same = me.memberships.every((m) => m.role === top);
  return (
    <>
      <span className="sr-only">role: </span>
      <span data-testid="current-role">{roleLabel[top]}</span>
      {same ? (n === 1 ? ' in 1 project' : ` in ${n} projects`) : ` and more in ${n} projects`}
    </>
  );
}

function ProjectSwitcher({ current }: { current?: string }) {
  const projects = useProjects();
  const navigate = useNavigate();
  const list = projects.data?.projects ?? [];
  return (
    <div className="flex min-w-0 flex-1 items-center gap-2 sm:flex-none">
      <label htmlFor="project-switcher" className="sr-only text-xs font-medium tracking-wider text-ink-300 uppercase md:not-sr-only">
        Project
      </label>
      <select
        id="project-switcher"
        className="w-full min-w-0 max-w-56 rounded-md border border-white/20 bg-ink-800 px-2 py-1.5 text-sm text-white focus:border-ember-500 focus:outline-none"
        value={current ?? ''}
        disabled={projects.isPending || list.length === 0}
        onChange={(e) => e.target.value && navigate(to.project(e.target.value))}
      >
        <option value="">{projects.isPending ? 'Loading…' : list.length ? 'Choose a project…' : 'No projects'}</option>
        {list.map((p) => (
          <option key={p.slug} value={p.slug}>
            {p.name}
          </option>
        ))}
      </select>
    </div>
  );
}
