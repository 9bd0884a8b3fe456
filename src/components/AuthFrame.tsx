import type { ReactNode } from 'react';
import { Logo } from './Logo';

/** The two-column frame of the signed-out pages: our mark and a sentence on the left, the form on the right. */
export function AuthFrame({ title, children }: { title: string; children: ReactNode }) {
  return (
    <div className="grid min-h-screen lg:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <aside className="relative hidden overflow-hidden bg-ink-900 p-12 text-white lg:flex lg:flex-col lg:justify-between">
        <Logo />
        <svg viewBox="0 0 400 220" className="absolute inset-x-0 top-1/3 w-full text-ember-500 opacity-90" aria-hidden="true">
          <path d="M-10 190 40 40 90 190 140 40 190 190 240 40 290 190 340 40 390 190 440 40" fill="none" stroke="currentColor" strokeWidth="10" strokeLinejoin="round" />
          <path d="M-10 205H420" stroke="#8b91b7" strokeOpacity=".4" strokeWidth="2" />
        </svg>
        <p className="relative max-w-sm text-lg text-ink-200">
          Folding plans of DSP datapaths, checked on every commit: folded delays, retiming, registers, utilization and the iteration bound.
        </p>
      </aside>
      <div className="flex items-center justify-center px-6 py-12">
        <div className="w-full max-w-sm">
          <Logo className="mb-10 text-ink-900 lg:hidden" />
          <h1 className="mb-6 text-2xl font-bold tracking-tight text-ink-950">{title}</h1>
          {children}
        </div>
      </div>
    </div>
  );
}

export function Field({ label, hint, children, id }: { label: string; hint?: ReactNode; children: ReactNode; id: string }) {
  return (
    <div>
      <label htmlFor={id} className="mb-1 block text-sm font-medium text-ink-800">
        {label}
      </label>
      {children}
      {hint && (
        <p id={`${id}-hint`} className="mt-1 text-xs text-ink-600">
          {hint}
        </p>
      )}
    </div>
  );
}

export function FormError({ error }: { error: string | null }) {
  if (!error) return null;
  return (
    <p role="alert" className="rounded-lg border border-fail-600/30 bg-fail-100/60 px-3 py-2 text-sm text-fail-700">
      {error}
    </p>
  );
}
