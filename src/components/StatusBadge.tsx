import type { Status } from '../../shared/types';

// Status is never told by colour alone: each one has its own shape and its own word.
// pass = circle with a tick, fail = diamond with a cross, error (invalid input) = square with a bar.

export const statusLabel: Record<Status, string> = {
  pass: 'Pass',
  fail: 'Fail',
  error: 'Invalid',
};

const statusClass: Record<Status, string> = {
  pass: 'bg-pass-100 text-pass-700 ring-pass-600/30',
  fail: 'bg-fail-100 text-fail-700 ring-fail-600/30',
  error: 'bg-error-100 text-error-700 ring-error-600/30',
};

export function StatusIcon({ status, size = 14 }: { status: Status; size?: number }) {
  return (
    <svg width={size} height={size} viewBox="0 0 16 16" aria-hidden="true" focusable="false" className="shrink-0">
      {status === 'pass' && (
        <>
          <circle cx="8" cy="8" r="7" fill="currentColor" />
          <path d="M4.6 8.3 7 10.6 11.4 5.6" fill="none" stroke="white" strokeWidth="1.9" strokeLinecap="round" strokeLinejoin="round" />
        </>
      )}
      {status === 'fail' && (
        <>
          <path d="M8 0.8 15.2 8 8 15.2 0.8 8Z" fill="currentColor" />
          <path d="M5.8 5.8 10.2 10.2M10.2 5.8 5.8 10.2" stroke="white" strokeWidth="1.8" strokeLinecap="round" />
        </>
      )}
      {status === 'error' && (
        <>
          <rect x="1.2" y="1.2" width="13.6" height="13.6" rx="2" fill="currentColor" />
          <path d="M8 4.2V9" stroke="white" strokeWidth="2" strokeLinecap="round" />
          <circle cx="8" cy="11.7" r="1.15" fill="white" />
        </>
      )}
    </svg>
  );
}

export function StatusBadge({ status, size = 'md', label }: { status: Status; size?: 'sm' | 'md' | 'lg'; label?: string }) {
  const pad = size === 'lg' ? 'px-3 py-1 text-base gap-2' : size === 'sm' ? 'px-1.5 py-0.5 text-xs gap-1' : 'px-2 py-0.5 text-sm gap-1.5';
  return (
    <span
      className={`inline-flex items-center rounded-full font-medium ring-1 ring-inset ${pad} ${statusClass[status]}`}
      data-status={status}
    >
      <StatusIcon status={status} size={size === 'lg' ? 18 : size === 'sm' ? 12 : 14} />
      {label ?? statusLabel[status]}
    </span>
  );
}

/** Warning = triangle, error = square: the same shapes as the statuses they lead to. */
export function SeverityIcon({ severity, size = 14 }: { severity: 'error' | 'warning'; size?: number }) {
  if (severity === 'error') return <StatusIcon status="error" size={size} />;
  return (
    <svg width={size} height={size} viewBox="0 0 16 16" aria-hidden="true" focusable="false" className="shrink-0">
      <path d="M8 1.2 15.2 14.4H0.8Z" fill="currentColor" strokeLinejoin="round" />
      <path d="M8 5.6V9.6" stroke="white" strokeWidth="1.8" strokeLinecap="round" />
      <circle cx="8" cy="12" r="1" fill="white" />
    </svg>
  );
}

export function SeverityBadge({ severity }: { severity: 'error' | 'warning' }) {
  const cls = severity === 'error' ? 'bg-error-100 text-error-700' : 'bg-warn-100 text-warn-700';
  return (
    <span className={`inline-flex items-center gap-1 rounded px-1.5 py-0.5 text-xs font-medium ${cls}`}>
      <SeverityIcon severity={severity} size={12} />
      {severity === 'error' ? 'Error' : 'Warning'}
    </span>
  );
}
