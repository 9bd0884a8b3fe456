import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { ApiError, errorMessage } from '../api/client';

// Loading, empty and error states share one look on every page.

export function Loading({ label = 'Loading…', className = '' }: { label?: string; className?: string }) {
  return (
    <div role="status" aria-live="polite" className={`flex items-center gap-3 py-10 text-ink-600 ${className}`}>
      <svg width="34" height="18" viewBox="0 0 34 18" aria-hidden="true" className="text-ember-500">
        <path d="M2 15 9 3 16 15 23 3 30 15" fill="none" stroke="currentColor" strokeWidth="3" strokeLinejoin="round" strokeLinecap="round" strokeDasharray="60" className="animate-fold" />
      </svg>
      <span>{label}</span>
    </div>
  );
}

export function EmptyState({ title, children, action }: { title: string; children?: ReactNode; action?: ReactNode }) {
  return (
    <div className="rounded-xl border border-dashed border-ink-300 bg-white/60 px-6 py-10 text-center">
      <svg width="40" height="24" viewBox="0 0 40 24" aria-hidden="true" className="mx-auto mb-3 text-ink-300">
        <path d="M2 20 10 4 18 20 26 4 34 20" fill="none" stroke="currentColor" strokeWidth="2.5" strokeLinejoin="round" strokeLinecap="round" />
      </svg>
      <p className="font-medium text-ink-800">{title}</p>
      {children && <div className="mt-1 text-sm text-ink-600">{children}</div>}
      {action && <div className="mt-4">{action}</div>}
    </div>
  );
}

export function ErrorState({ error, title, onRetry }: { error: unknown; title?: string; onRetry?: () => void }) {
  const api = error instanceof ApiError ? error : null;
  const heading =
    title ??
    (api?.isForbidden
      ? 'Your role does not give access to this'
      : api?.isNotFound
        ? 'Not found'
        : api?.isUnauthorized
          ? 'You are signed out'
          : 'Something went wrong');
  return (
    <div role="alert" className="rounded-xl border border-fail-600/30 bg-fail-100/60 px-5 py-4 text-fail-700">
      <p className="font-medium">{heading}</p>
      <p className="mt-1 text-sm">{errorMessage(error)}</p>
      <div className="mt-3 flex gap-3 text-sm">
        {api?.isUnauthorized && (
          <Link to="/signin" className="font-medium underline">
            Sign in
          </Link>
        )}
        {onRetry && !api?.isForbidden && !api?.isNotFound && (
          <button type="button" onClick={onRetry} className="font-medium underline">
            Try again
          </button>
        )}
      </div>
    </div>
  );
}

/** Renders loading / error / content for one query result. */
export function QueryState<T>({
  query,
  loadingLabel,
  children,
}: {
  query: { data: T | undefined; error: unknown; isPending: boolean; refetch: () => unknown };
  loadingLabel?: string;
  children: (data: T) => ReactNode;
}) {
  if (query.isPending) return <Loading label={loadingLabel} />;
  if (query.error || query.data === undefined) return <ErrorState error={query.error} onRetry={() => void query.refetch()} />;
  return <>{children(query.data)}</>;
}
