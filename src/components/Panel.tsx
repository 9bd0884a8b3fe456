import type { HTMLAttributes, ReactNode } from 'react';

/** A titled block of a page; the id makes it a target of the in-page navigation. */
export function Panel({
  id,
  title,
  subtitle,
  actions,
  children,
  className = '',
}: {
  id?: string;
  title: ReactNode;
  subtitle?: ReactNode;
  actions?: ReactNode;
  children: ReactNode;
  className?: string;
}) {
  const headingId = id ? `${id}-heading` : undefined;
  return (
    <section id={id} aria-labelledby={headingId} className={`min-w-0 scroll-mt-28 rounded-xl border border-ink-200 bg-white shadow-[0_1px_0_var(--color-ink-200)] ${className}`}>
      <header className="flex flex-wrap items-start justify-between gap-3 border-b border-ink-100 px-5 py-3">
        <div>
          <h2 id={headingId} className="text-base font-bold tracking-tight text-ink-900">
            {title}
          </h2>
          {subtitle && <p className="mt-0.5 text-sm text-ink-600">{subtitle}</p>}
        </div>
        {actions && <div className="flex items-center gap-2">{actions}</div>}
      </header>
      <div className="px-5 py-4">{children}</div>
    </section>
  );
}

/** A figure with a label, for the rows of key numbers at the top of a report. */
export function Stat({ label, value, hint, tone }: { label: string; value: ReactNode; hint?: ReactNode; tone?: 'bad' | 'good' }) {
  const color = tone === 'bad' ? 'text-fail-700' : tone === 'good' ? 'text-pass-700' : 'text-ink-900';
  return (
    <div className="min-w-0 rounded-lg bg-ink-50 px-4 py-3">
      <dt className="text-xs font-medium uppercase tracking-wider text-ink-500">{label}</dt>
      <dd className={`mt-1 text-xl font-bold ${color}`}>{value}</dd>
      {hint && <dd className="mt-0.5 text-xs text-ink-600">{hint}</dd>}
    </div>
  );
}

export function PageHeader({ title, eyebrow, children, actions }: { title: ReactNode; eyebrow?: ReactNode; children?: ReactNode; actions?: ReactNode }) {
  return (
    <div className="mb-6 flex flex-wrap items-end justify-between gap-4">
      <div className="min-w-0">
        {eyebrow && <div className="mb-1 text-sm text-ink-600">{eyebrow}</div>}
        <h1 className="truncate text-2xl font-bold tracking-tight text-ink-950 lg:text-3xl">{title}</h1>
        {children && <div className="mt-1 text-ink-700">{children}</div>}
      </div>
      {actions && <div className="flex flex-wrap items-center gap-2">{actions}</div>}
    </div>
  );
}

export const buttonClass = {
  primary:
    'inline-flex items-center justify-center gap-2 rounded-lg bg-ink-900 px-4 py-2 text-sm font-medium text-white hover:bg-ink-700 disabled:cursor-not-allowed disabled:opacity-50',
  accent:
    'inline-flex items-center justify-center gap-2 rounded-lg bg-ember-600 px-4 py-2 text-sm font-medium text-white hover:bg-ember-700 disabled:cursor-not-allowed disabled:opacity-50',
  secondary:
    'inline-flex items-center justify-center gap-2 rounded-lg border border-ink-300 bg-white px-4 py-2 text-sm font-medium text-ink-800 hover:bg-ink-50 disabled:cursor-not-allowed disabled:opacity-50',
  danger:
    'inline-flex items-center justify-center gap-2 rounded-lg border border-fail-600/40 bg-white px-3 py-1.5 text-sm font-medium text-fail-700 hover:bg-fail-100 disabled:cursor-not-allowed disabled:opacity-50',
  link: 'font-medium text-ember-700 underline decoration-ember-200 underline-offset-2 hover:decoration-ember-600',
};

export const inputClass =
  'block w-full rounded-lg border border-ink-300 bg-white px-3 py-2 text-sm text-ink-900 placeholder:text-ink-400 focus:border-ember-500 focus:outline-none focus:ring-2 focus:ring-ember-500/30';

export const tableClass = {
  table: 'w-full border-collapse text-sm',
  th: 'border-b border-ink-200 bg-ink-50 px-3 py-2 text-left text-xs font-medium uppercase tracking-wider text-ink-600',
  td: 'border-b border-ink-100 px-3 py-2 text-ink-900',
};

/** The header row of a plain table, one heading per column; a `false` entry leaves its column out. */
export function ColumnHeads({ columns }: { columns: ReactNode[] }) {
  return (
    <thead>
      <tr>
        {columns.map((c, i) =>
          c === false ? null : (
            <th key={i} scope="col" className={tableClass.th}>
              {c}
            </th>
          ),
        )}
      </tr>
    </thead>
  );
}

/**
 * A box that scrolls sideways by itself, so a wide table never widens the page on a phone. It is
 * focusable and named, so a keyboard can scroll it (axe-core's scrollable-region-focusable), and
 * `relative`, so visually hidden text inside it is clipped by it instead of widening the document.
 */
export function ScrollRegion({ label, className = '', children, ...rest }: { label: string; className?: string; children: ReactNode } & HTMLAttributes<HTMLDivElement>) {
  return (
    <div {...rest} className={`relative overflow-x-auto ${className}`} tabIndex={0} role="region" aria-label={label}>
      {children}
    </div>
  );
}
