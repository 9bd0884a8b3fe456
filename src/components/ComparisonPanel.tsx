import { Link } from 'react-router-dom';
import type { Comparison, DesignDelta, Metric, Regression, Status } from '../api/types';
import { StatusIcon } from './StatusBadge';
import { dateTime, pct, shortCommit } from './format';

/** How the base run was chosen, in words. */
export function basisText(c: Comparison): string {
  if (c.basis === 'merge-base' && c.baseRun) return `Compared with ${c.baseBranch} at the merge-base commit ${shortCommit(c.baseRun.commit)}.`;
  if (c.basis === 'nearest-earlier' && c.baseRun)
    return `No run of ${c.baseBranch} at the merge-base, so compared with the latest run of ${c.baseBranch} before this one (${shortCommit(c.baseRun.commit)}, ${dateTime(c.baseRun.createdAt)}).`;
  return `There is no earlier run of ${c.baseBranch} to compare with.`;
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;
const moved = (m: Metric) => m.delta !== null && m.delta !== 0;
const statusWord: Record<Status, string> = { pass: 'passes', fail: 'fails', error: 'is not a valid design' };
const statusWas: Record<Status, string> = { pass: 'passed', fail: 'failed', error: 'was not a valid design' };

/** One thing that moved in the plan, said as an engineer would say it. */
interface Change {
  key: string;
  text: string;
  /** Past the project's allowance (the regression tolerance): the gate counts it. */
  judged?: Regression;
  worse: boolean;
}

/** What moved in a design's plan between the base run and this one, most telling first. */
export function planChanges(d: DesignDelta, baseBranch: string): Change[] {
  const out: Change[] = [];
  const judged = (r: Regression) => (d.regressions.includes(r) ? r : undefined);
  if (d.status && d.baseStatus && d.status !== d.baseStatus)
    out.push({ key: 'status', text: `${statusWas[d.baseStatus]} on ${baseBranch}, ${statusWord[d.status]} now`, judged: judged('status'), worse: d.baseStatus === 'pass' });
  const f = d.factor;
  if (moved(f))
    out.push({
      key: 'factor',
      text: f.delta! > 0 ? `folded looser: N goes from ${f.base} to ${f.current}, so a sample takes ${f.current} cycles` : `folded tighter: N goes from ${f.base} to ${f.current}, so a sample takes ${f.current} cycles`,
      worse: false,
    });
  if (moved(d.units)) {
    const n = Math.abs(d.units.delta!);
    out.push({ key: 'units', text: d.units.delta! > 0 ? `uses ${plural(n, 'more unit')} (${d.units.base} → ${d.units.current})` : `uses ${plural(n, 'unit')} fewer (${d.units.base} → ${d.units.current})`, worse: d.units.delta! > 0 });
  }
  if (moved(d.registerMinimum)) {
    const n = Math.abs(d.registerMinimum.delta!);
    out.push({
      key: 'registers',
      text: d.registerMinimum.delta! > 0 ? `now needs ${plural(n, 'more register')} (${d.registerMinimum.base} → ${d.registerMinimum.current})` : `now needs ${plural(n, 'register')} fewer (${d.registerMinimum.base} → ${d.registerMinimum.current})`,
      judged: judged('registerMinimum'),
      worse: d.registerMinimum.delta! > 0,
    });
  }
  const u = d.utilization;
  if (moved(u) && Math.abs(u.delta!) >= 0.0005) {
    const points = (Math.abs(u.delta!) * 100).toFixed(1).replace(/\.0$/, '');
    out.push({
      key: 'utilization',
      text: `the units are busy ${pct(u.current)} of the partitions, ${u.delta! < 0 ? 'down' : 'up'} ${points} points from ${pct(u.base)}`,
      judged: judged('utilization'),
      worse: u.delta! < 0,
    });
  }
  if (moved(d.negativeEdges)) {
    const n = Math.abs(d.negativeEdges.delta!);
    out.push({
      key: 'negative',
      text: d.negativeEdges.delta! > 0 ? `${plural(n, 'more edge has', 'more edges have')} a negative folded delay (${d.negativeEdges.base} → ${d.negativeEdges.current})` : `${plural(n, 'edge', 'edges')} fewer with a negative folded delay (${d.negativeEdges.base} → ${d.negativeEdges.current})`,
      worse: d.negativeEdges.delta! > 0,
    });
  }
  const r = d.retimingFeasible;
  if (r.base === true && r.current === false) out.push({ key: 'loop', text: 'a loop now stops every retiming: the folded datapath cannot be built as planned', worse: true });
  if (r.base === false && r.current === true) out.push({ key: 'loop', text: 'retiming now removes every negative folded delay: the datapath can be built again', worse: false });
  if (moved(d.latencyAdded)) {
    const n = Math.abs(d.latencyAdded.delta!);
    out.push({ key: 'latency', text: `retiming adds ${plural(n, 'iteration')} ${d.latencyAdded.delta! > 0 ? 'more' : 'less'} of latency (${d.latencyAdded.base} → ${d.latencyAdded.current})`, worse: d.latencyAdded.delta! > 0 });
  }
  if (moved(d.violations)) {
    const n = Math.abs(d.violations.delta!);
    out.push({ key: 'violations', text: d.violations.delta! > 0 ? `breaks ${plural(n, 'more rule')} (${d.violations.base} → ${d.violations.current})` : `breaks ${plural(n, 'rule')} fewer (${d.violations.base} → ${d.violations.current})`, judged: judged('violations'), worse: d.violations.delta! > 0 });
  }
  // The plan's own moves first (the cause), then what the gate counts, then what got worse, then the rest.
  const rank = (c: Change) => (c.key === 'factor' || c.key === 'units' ? 0 : c.judged ? 1 : c.worse ? 2 : 3);
  return out.map((c, i) => ({ c, i })).sort((a, b) => rank(a.c) - rank(b.c) || a.i - b.i).map(({ c }) => c);
}

/** The before and after of the plan's figures, as a short strip: what the design looked like, and looks like now. */
function PlanFigures({ d }: { d: DesignDelta }) {
  const figures: { label: string; m: Metric; show: (v: number) => string; judged?: Regression }[] = [
    { label: 'N', m: d.factor, show: String },
    { label: 'units', m: d.units, show: String },
    { label: 'registers', m: d.registerMinimum, show: String, judged: 'registerMinimum' },
    { label: 'busy', m: d.utilization, show: (v) => pct(v), judged: 'utilization' },
    { label: 'negative D_F', m: d.negativeEdges, show: String },
  ];
  return (
    <dl className="flex flex-wrap gap-x-1 gap-y-2 font-mono text-[13px]" data-testid="plan-figures">
      {figures
        .filter((f) => f.m.current !== null || f.m.base !== null)
        .map((f) => {
          const changed = moved(f.m);
          const past = f.judged && d.regressions.includes(f.judged);
          return (
            <div
              key={f.label}
              data-figure={f.label}
              data-changed={changed || undefined}
              className={`flex items-baseline gap-1.5 border-b-2 px-2 py-0.5 ${past ? 'border-fail-600' : changed ? 'border-ember-500' : 'border-transparent text-ink-500'}`}
            >
              <dt className="font-sans text-xs text-ink-600">{f.label}</dt>
              <dd>
                {changed ? (
                  <>
                    <span className="text-ink-500">{f.m.base === null ? '—' : f.show(f.m.base)}</span>
                    <span aria-label="then" className="px-1 text-ink-400">
                      ›
                    </span>
                    <span className="font-bold text-ink-950">{f.m.current === null ? '—' : f.show(f.m.current)}</span>
                  </>
                ) : (
                  <span>{f.m.current === null ? (f.m.base === null ? '—' : f.show(f.m.base)) : f.show(f.m.current)}</span>
                )}
              </dd>
            </div>
          );
        })}
    </dl>
  );
}

/** A folded-strip mark: the plan of a design, creased where it changed. */
function FoldMark({ tone }: { tone: 'past' | 'changed' | 'new' }) {
  const c = tone === 'past' ? 'var(--color-fail-600)' : tone === 'changed' ? 'var(--color-ember-600)' : 'var(--color-ink-500)';
  return (
    <svg width="22" height="16" viewBox="0 0 22 16" aria-hidden="true" className="mt-1 shrink-0">
      <path d="M1 13 6 3 11 13 16 3 21 13" fill="none" stroke={c} strokeWidth="2.2" strokeLinejoin="round" strokeLinecap="round" />
    </svg>
  );
}

function DesignChange({ d, c, onSelectDesign }: { d: DesignDelta; c: Comparison; onSelectDesign?: (name: string) => void }) {
  const changes = planChanges(d, c.baseBranch);
  const past = d.regressions.length > 0;
  const allowance = `more than the project's allowance of ${pct(c.tolerance, 1)}`;
  return (
    <li
      className={`rounded-lg border bg-white px-4 py-3 ${past ? 'border-fail-600/40 shadow-[inset_4px_0_0_var(--color-fail-600)]' : 'border-ink-200 shadow-[inset_4px_0_0_var(--color-ember-500)]'}`}
      data-design={d.name}
      data-regressed={past || undefined}
    >
      <div className="flex items-start gap-3">
        <FoldMark tone={past ? 'past' : 'changed'} />
        <div className="min-w-0 flex-1 space-y-2">
          <div className="flex flex-wrap items-baseline gap-x-3 gap-y-1">
            <h3 className="font-bold text-ink-950">
              {onSelectDesign ? (
                <button type="button" className="text-left underline decoration-ink-300 underline-offset-4 hover:decoration-ember-600" onClick={() => onSelectDesign(d.name)}>
                  {d.name}
                </button>
              ) : (
                d.name
              )}
            </h3>
            <span className="truncate text-xs text-ink-500">{d.file}</span>
            {past && (
              <span className="inline-flex items-center gap-1 text-xs font-medium text-fail-700">
                <StatusIcon status="fail" size={12} /> the gate counts this change
              </span>
            )}
          </div>
          <PlanFigures d={d} />
          <ul className="space-y-0.5 text-sm text-ink-800">
            {changes.map((ch) => (
              <li key={ch.key} data-change={ch.key} data-judged={ch.judged ? true : undefined} className="flex gap-2">
                <span aria-hidden="true" className={ch.judged ? 'text-fail-600' : ch.worse ? 'text-ember-700' : ch.key === 'factor' ? 'text-ink-500' : 'text-pass-700'}>
                  {ch.judged ? '◆' : ch.worse ? '▸' : '▹'}
                </span>
                <span>
                  {ch.text}
                  {ch.judged === 'utilization' || ch.judged === 'registerMinimum' ? (
                    <span className="font-medium text-fail-700">: {allowance}</span>
                  ) : null}
                </span>
              </li>
            ))}
          </ul>
        </div>
      </div>
    </li>
  );
}

/**
 * What changed against the base branch's run, in the terms of the plan: one entry per design whose
 * plan or verdict moved, with its figures before and after and the change in words; what is past
 * the project's allowance is marked and counted. With `design`, only that design (the design view
 * shows it).
 */
export function ComparisonPanel({ comparison: c, slug, design, onSelectDesign }: { comparison: Comparison; slug: string; design?: string; onSelectDesign?: (name: string) => void }) {
  const rows = design ? c.designs.filter((d) => d.name === design) : c.designs;
  const kept = rows.filter((d) => d.presence === 'kept');
  const changed = kept.filter((d) => d.regressions.length > 0 || planChanges(d, c.baseBranch).length > 0);
  changed.sort((a, b) => Number(b.regressions.length > 0) - Number(a.regressions.length > 0));
  const same = kept.filter((d) => !changed.includes(d));
  const added = rows.filter((d) => d.presence === 'added');
  const removed = rows.filter((d) => d.presence === 'removed');
  const past = changed.filter((d) => d.regressions.length > 0).length;
  return (
    <div className="space-y-3" data-testid="comparison" data-basis={c.basis}>
      {!design && (
        <p className="text-sm text-ink-700">
          {basisText(c)}{' '}
          {c.baseRun && (
            <Link to={`/projects/${encodeURIComponent(slug)}/runs/${c.baseRun.id}`} className="font-medium text-ember-700 underline underline-offset-2">
              Open the base run
            </Link>
          )}
        </p>
      )}
      {c.baseRun && rows.length === 0 && <p className="text-sm text-ink-600">The base run has no design of this name.</p>}
      {c.baseRun && rows.length > 0 && !design && (
        <p className="text-sm font-medium text-ink-900" data-testid="comparison-summary">
          {changed.length === 0
            ? added.length || removed.length
              ? `The designs this run shares with ${c.baseBranch} fold as they did there.`
              : `Every design folds as it did on ${c.baseBranch}.`
            : `${plural(changed.length, 'design')} changed ${changed.length === 1 ? 'its' : 'their'} plan or verdict${past ? `, ${past} of them past the project's allowance of ${pct(c.tolerance, 1)}` : `, none past the project's allowance of ${pct(c.tolerance, 1)}`}.`}
        </p>
      )}
      {changed.length > 0 && (
        <ul className="space-y-2" aria-label="Designs whose plan changed">
          {changed.map((d) => (
            <DesignChange key={d.name} d={d} c={c} onSelectDesign={onSelectDesign} />
          ))}
        </ul>
      )}
      {design && same.length > 0 && <p className="text-sm text-ink-700">This design folds exactly as it did on {c.baseBranch}: same factor, units, registers and utilization.</p>}
      {!design && same.length > 0 && (
        <p className="text-sm text-ink-700" data-testid="comparison-same">
          <span className="font-medium">As on {c.baseBranch}:</span> {same.map((d) => d.name).join(', ')}.
        </p>
      )}
      {added.length > 0 && (
        <p className="text-sm text-ink-700" data-testid="comparison-added">
          <span className="font-medium">New in this run:</span>{' '}
          {added.map((d, i) => (
            <span key={d.name}>
              {i > 0 && ', '}
              {d.name} ({d.status ? statusWord[d.status] : 'no result'}
              {d.factor.current !== null ? `, N = ${d.factor.current}` : ''})
            </span>
          ))}
          .
        </p>
      )}
      {removed.length > 0 && (
        <p className="text-sm text-ink-700" data-testid="comparison-removed">
          <span className="font-medium">No longer in this run:</span> {removed.map((d) => d.name).join(', ')}.
        </p>
      )}
    </div>
  );
}
