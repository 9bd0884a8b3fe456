import { lazy, Suspense, type ReactNode } from 'react';
import { createBrowserRouter } from 'react-router-dom';
import { Shell } from './components/Shell';
import { ProjectLayout } from './components/ProjectLayout';
import { Loading } from './components/States';
import { RouteError } from './components/RouteError';

// Every page is its own chunk: the first page loads only the shell, and the charts (recharts)
// and virtual tables come with the pages that draw them.
const SignInPage = lazy(() => import('./pages/SignInPage'));
const SignOutPage = lazy(() => import('./pages/SignOutPage'));
const AcceptInvitationPage = lazy(() => import('./pages/AcceptInvitationPage'));
const ProjectsPage = lazy(() => import('./pages/ProjectsPage'));
const BranchesPage = lazy(() => import('./pages/BranchesPage'));
const BranchPage = lazy(() => import('./pages/BranchPage'));
const RunPage = lazy(() => import('./pages/RunPage'));
const RulesPage = lazy(() => import('./pages/RulesPage'));
const TokensPage = lazy(() => import('./pages/TokensPage'));
const HostPage = lazy(() => import('./pages/HostPage'));
const MembersPage = lazy(() => import('./pages/MembersPage'));
const UsersPage = lazy(() => import('./pages/UsersPage'));
const TryDesignPage = lazy(() => import('./pages/TryDesignPage'));
const JobPage = lazy(() => import('./pages/JobPage'));
const JobsPage = lazy(() => import('./pages/JobsPage'));
const NotFoundPage = lazy(() => import('./pages/NotFoundPage'));

const page = (node: ReactNode) => <Suspense fallback={<Loading label="Loading the page…" />}>{node}</Suspense>;

export const router = createBrowserRouter([
  { path: '/signin', element: page(<SignInPage />), errorElement: <RouteError /> },
  { path: '/signout', element: page(<SignOutPage />), errorElement: <RouteError /> },
  { path: '/invitations/:token', element: page(<AcceptInvitationPage />), errorElement: <RouteError /> },
  {
    path: '/',
    element: <Shell />,
    errorElement: <RouteError />,
    children: [
      { index: true, element: page(<ProjectsPage />) },
      { path: 'try', element: page(<TryDesignPage />) },
      { path: 'admin/users', element: page(<UsersPage />) },
      {
        path: 'projects/:slug',
        element: <ProjectLayout />,
        children: [
          { index: true, element: page(<BranchesPage />) },
          { path: 'branches/*', element: page(<BranchPage />) },
          { path: 'runs/:id', element: page(<RunPage />) },
          { path: 'jobs', element: page(<JobsPage />) },
          { path: 'jobs/:id', element: page(<JobPage />) },
          { path: 'rules', element: page(<RulesPage />) },
          { path: 'tokens', element: page(<TokensPage />) },
          { path: 'host', element: page(<HostPage />) },
          { path: 'members', element: page(<MembersPage />) },
        ],
      },
      { path: '*', element: page(<NotFoundPage />) },
    ],
  },
]);

