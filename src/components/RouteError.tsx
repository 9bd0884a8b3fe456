import { isRouteErrorResponse, Link, useRouteError } from 'react-router-dom';
import { Logo } from './Logo';

/** Shown when a page fails to load or throws while rendering (for instance after a deploy changed the chunks). */
export function RouteError() {
  const error = useRouteError();
  const message = isRouteErrorResponse(error) ? `${error.status} ${error.statusText}` : error instanceof Error ? error.message : String(error);
  return (
    <div className="mx-auto max-w-xl px-6 py-16">
      <Logo className="text-ink-900" />
      <div role="alert" className="mt-8 rounded-xl border border-fail-600/30 bg-fail-100/60 p-5 text-fail-700">
        <h1 className="text-lg font-bold">This page could not be shown</h1>
        <p className="mt-1 text-sm">{message}</p>
        <p className="mt-3 text-sm">
          <button type="button" className="font-medium underline" onClick={() => window.location.reload()}>
            Reload
          </button>{' '}
          or go to{' '}
          <Link to="/" className="font-medium underline">
            your projects
          </Link>
          .
        </p>
      </div>
    </div>
  );
}
