import { useEffect, useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useRevertRules, useRuleHistory, useRules, useSaveRules, useUpdateProject } from '../api/hooks';
import { can } from '../api/roles';
import type { NegativeDelayPolicy, RuleName, SimulationRuleName } from '../../shared/types';
import type { RuleChange, TeamRules, TeamRuleSet } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { RetentionPanel } from '../components/RetentionPanel';
import { useProjectContext } from '../components/ProjectLayout';
import { ColumnHeads, PageHeader, Panel, buttonClass, inputClass, tableClass, ScrollRegion } from '../components/Panel';
import { ruleLabel } from '../components/ViolationsList';
import { RULES_SCHEMA } from '../../shared/report/rules';
import { EmptyState, ErrorState, Loading, QueryState } from '../components/States';
import { ago, dateTime, pct } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';

const policyText: Record<NegativeDelayPolicy, string> = {
  fail: 'fail: any negative folded delay fails the check',
  retime: 'retime: fail only when no retiming removes them',
  warn: 'warn: report them, never fail',
};

/** Every rule the page sets: the gate's (`pleat check`) and the two that `pleat simulate` gates on. */
type PageRule = RuleName | SimulationRuleName;

/** The gate's labels, and the simulate gates' in the same voice. */
const label: Record<PageRule, string> = {
  ...ruleLabel,
  max_overflows: 'Overflow ceiling',
  min_sqnr_db: 'SQNR floor',
};

const help: Record<PageRule, string> = {
  negative_delays: 'What a negative folded delay does to the verdict.',
  min_utilization: 'The whole design must keep its units at least this busy.',
  min_unit_utilization: 'Every unit must be at least this busy.',
  max_registers: 'The lifetime-analysis register minimum may not exceed this.',
  max_overflows: 'A pleat simulate run may count at most this many fixed-point overflows.',
  min_sqnr_db: 'Every output of a pleat simulate --arithmetic fixed run must reach at least this signal-to-quantisation-noise ratio.',
};

/** The same bounds as the rules schema of the engine, which the server checks again. */
const MAX_OVERFLOWS_LIMIT = RULES_SCHEMA.properties.max_overflows as { maximum: number };
const SQNR_LIMITS = RULES_SCHEMA.properties.min_sqnr_db as { minimum: number; maximum: number };

/** Form state: text as typed, so that an empty field means “not set”. */
interface Draft {
  negative_delays: '' | NegativeDelayPolicy;
  min_utilization: string;
  min_unit_utilization: string;
  max_registers: string;
  max_overflows: string;
  min_sqnr_db: string;
}

/** A fraction as the per-cent text of the form, exact (no rounding to one decimal). */
function percentText(f: number): string {
  return String(Number((f * 100).toPrecision(12)));
}

function toDraft(r: TeamRuleSet): Draft {
  return {
    negative_delays: r.negative_delays ?? '',
    min_utilization: r.min_utilization === undefined ? '' : percentText(r.min_utilization),
    min_unit_utilization: r.min_unit_utilization === undefined ? '' : percentText(r.min_unit_utilization),
    max_registers: r.max_registers === undefined ? '' : String(r.max_registers),
    max_overflows: r.max_overflows === undefined ? '' : String(r.max_overflows),
    min_sqnr_db: r.min_sqnr_db === undefined ? '' : String(r.min_sqnr_db),
  };
}

/**
 * A per-cent field as typed. The config file and the API take fractions (0.72), the form per
 * cent (72): a number between 0 and 1 without a `%` is ambiguous, so it is refused with the
 * per-cent reading offered instead of being saved as under one per cent (docs/web.md).
 */
export type PercentReading =
  | { kind: 'empty' }
  | { kind: 'ok'; fraction: number }
  | { kind: 'fraction-like'; suggestion: string }
  | { kind: 'bad'; message: string };

export function readPercent(typed: string, max: number): PercentReading {
  const t = typed.trim();
  if (t === '') return { kind: 'empty' };
  const m = /^([0-9]*\.?[0-9]+|[0-9]+\.)\s*(%?)$/.exec(t);
  if (!m) return { kind: 'bad', message: `Type a number of per cent from 0 to ${max}, such as 72.` };
  const v = Number(m[1]);
  if (v > max) return { kind: 'bad', message: `At most ${max} %; ${t} is more.` };
  if (v > 0 && v < 1 && m[2] !== '%') return { kind: 'fraction-like', suggestion: percentText(v) };
  return { kind: 'ok', fraction: Number((v / 100).toPrecision(12)) };
}

const PERCENT_RULES = ['min_utilization', 'min_unit_utilization'] as const;

function fromDraft(d: Draft): { rules: TeamRuleSet; problems: Partial<Record<PageRule, string>> } {
  const rules: TeamRuleSet = {};
  const problems: Partial<Record<PageRule, string>> = {};
  if (d.negative_delays) rules.negative_delays = d.negative_delays;
  for (const k of PERCENT_RULES) {
    const r = readPercent(d[k], 100);
    if (r.kind === 'ok') rules[k] = r.fraction;
    else if (r.kind === 'bad') problems[k] = r.message;
    else if (r.kind === 'fraction-like') problems[k] = `${d[k].trim()} looks like a fraction; this field takes per cent.`;
  }
  if (d.max_registers.trim() !== '') {
    const t = d.max_registers.trim();
    const v = Number(t);
    if (!/^[0-9]+$/.test(t) || !Number.isSafeInteger(v)) problems.max_registers = 'A whole number, 0 or more.';
    else rules.max_registers = v;
  }
  if (d.max_overflows.trim() !== '') {
    const t = d.max_overflows.trim();
    const v = Number(t);
    if (!/^[0-9]+$/.test(t) || v > MAX_OVERFLOWS_LIMIT.maximum) problems.max_overflows = `A whole number from 0 to ${MAX_OVERFLOWS_LIMIT.maximum.toLocaleString('en-US')}.`;
    else rules.max_overflows = v;
  }
  if (d.min_sqnr_db.trim() !== '') {
    const t = d.min_sqnr_db.trim().replace(/\s*dB$/i, '');
    const v = Number(t);
    if (!/^-?([0-9]*\.?[0-9]+|[0-9]+\.)$/.test(t) || v < SQNR_LIMITS.minimum || v > SQNR_LIMITS.maximum) problems.min_sqnr_db = `A number of dB from ${SQNR_LIMITS.minimum} to ${SQNR_LIMITS.maximum}, such as 60.`;
    else rules.min_sqnr_db = v;
  }
  return { rules, problems };
}

/** How a fraction reads in the form's preview: per cent, with the fraction the config file and the API use. */
function fractionNote(v: number, where: string): string {
  return `${percentText(v)} % (${v} ${where})`;
}

export function ruleValueText(rule: string, v: unknown): string {
  if (v === null || v === undefined) return 'not set';
  if ((rule === 'min_utilization' || rule === 'min_unit_utilization' || rule === 'regression_tolerance') && typeof v === 'number') return `${percentText(v)}%`;
  if (rule === 'min_sqnr_db' && typeof v === 'number') return `${v} dB`;
  return String(v);
}

export default function RulesPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Team rules · ${project.name}`);
  const rules = useRules(project.slug);
  const mayEdit = can.editRules(project.role);
  return (
    <div>
      <PageHeader title="Team rules">
        The floor under every repository's own rules: a repository's <code className="rounded bg-ink-100 px-1">pleat.config.yaml</code> may tighten a rule, never loosen it.
      </PageHeader>
      <div className="grid items-start gap-6 xl:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
        <Panel
          id="current-rules"
          title={mayEdit ? 'Edit the rules' : 'Rules in force'}
          subtitle={
            rules.data?.updatedAt
              ? `Last changed ${ago(rules.data.updatedAt)}${rules.data.updatedBy ? ` by ${rules.data.updatedBy.name}` : ''}`
              : 'No change recorded yet'
          }
        >
          <QueryState query={rules} loadingLabel="Loading the rules…">
            {(data) => (mayEdit ? <RulesForm slug={project.slug} data={data} /> : <RulesReadOnly data={data} />)}
          </QueryState>
        </Panel>
        <Panel id="rule-history" title="Changes" subtitle="Every change to the team rules, with who made it, when and why">
          <History slug={project.slug} mayEdit={mayEdit} />
        </Panel>
      </div>
      <div className="mt-6">
        <RetentionPanel project={project} mayEdit={mayEdit} />
      </div>
    </div>
  );
}

function RulesReadOnly({ data }: { data: TeamRules }) {
  const names = Object.keys(label) as PageRule[];
  return (
    <div>
      <dl className="divide-y divide-ink-100" data-testid="rules-readonly">
        {names.map((n) => (
          <div key={n} className="grid grid-cols-[1fr_auto] gap-3 py-2.5">
            <dt>
              <div className="font-medium">{label[n]}</div>
              <div className="text-xs text-ink-600">{help[n]}</div>
            </dt>
            <dd className="self-center text-right font-bold">{ruleValueText(n, data.rules[n])}</dd>
          </div>
        ))}
        <div className="grid grid-cols-[1fr_auto] gap-3 py-2.5">
          <dt>
            <div className="font-medium">Regression tolerance</div>
            <div className="text-xs text-ink-600">How much worse than the base branch a run may get before watchers get e-mail.</div>
          </dt>
          <dd className="self-center text-right font-bold">{pct(data.regressionTolerance)}</dd>
        </div>
      </dl>
      <p className="mt-3 text-sm text-ink-600">Only a lead of this project changes the team rules.</p>
    </div>
  );
}

function RulesForm({ slug, data }: { slug: string; data: TeamRules }) {
  const save = useSaveRules(slug);
  const updateProject = useUpdateProject(slug);
  const [draft, setDraft] = useState<Draft>(() => toDraft(data.rules));
  const [tolerance, setTolerance] = useState(percentText(data.regressionTolerance));
  const [problems, setProblems] = useState<Partial<Record<PageRule | 'tolerance', string>>>({});
  const [saved, setSaved] = useState<string | null>(null);
  const [reason, setReason] = useState('');
  useEffect(() => setDraft(toDraft(data.rules)), [data.rules]);

  // What saving would apply, computed as the person types, so the value is seen before it counts.
  const pending = fromDraft(draft);
  const tol = readPercent(tolerance, 1000);
  const changes: { label: string; from: string; to: string }[] = [];
  for (const k of Object.keys(label) as PageRule[]) {
    if (pending.problems[k]) continue;
    const before = data.rules[k];
    const after = pending.rules[k];
    if (before !== after) changes.push({ label: label[k], from: ruleValueText(k, before), to: ruleValueText(k, after) });
  }
  if (tol.kind === 'ok' && Math.abs(tol.fraction - data.regressionTolerance) > 1e-12)
    changes.push({ label: 'Regression tolerance', from: ruleValueText('regression_tolerance', data.regressionTolerance), to: ruleValueText('regression_tolerance', tol.fraction) });

  const submit = async (e: FormEvent) => {
    e.preventDefault();
    setSaved(null);
    const { rules, problems: p } = fromDraft(draft);
    const all: typeof problems = { ...p };
    if (tol.kind === 'bad') all.tolerance = tol.message;
    else if (tol.kind === 'fraction-like') all.tolerance = `${tolerance.trim()} looks like a fraction; this field takes per cent.`;
    else if (tol.kind === 'empty') all.tolerance = 'A number of per cent, 0 or more.';
    setProblems(all);
    if (Object.keys(all).length) return;
    try {
      const why = reason.trim() || undefined;
      const r = await save.mutateAsync({ rules, reason: why });
      let n = r.changed.length;
      if (tol.kind === 'ok' && Math.abs(tol.fraction - data.regressionTolerance) > 1e-12) {
        await updateProject.mutateAsync({ regressionTolerance: tol.fraction, reason: why });
        n++;
      }
      if (n > 0) setReason('');
      setSaved(n === 0 ? 'Nothing changed.' : `Saved ${n} change${n === 1 ? '' : 's'}. The next pleat check applies them.`);
    } catch {
      /* shown below from the mutation's error */
    }
  };

  /** The line under a per-cent field: the problem, the per-cent reading of a fraction, or what the gate will apply. */
  const percentNote = (id: string, typed: string, reading: PercentReading, problem: string | undefined, where: string, use: (v: string) => void) => {
    if (reading.kind === 'fraction-like')
      return (
        <div id={id} className="mt-1 space-y-1 text-xs text-fail-700" data-testid={`${id}-fraction`}>
          <p>
            {typed.trim()} looks like a fraction, the form of <code>pleat.config.yaml</code>. This field takes per cent.
          </p>
          <button type="button" className="font-medium text-ember-700 underline underline-offset-2" onClick={() => use(`${reading.suggestion}`)}>
            Use {reading.suggestion} %
          </button>
          <p className="text-ink-600">For under one per cent, type it with the sign: {typed.trim()} %.</p>
        </div>
      );
    if (reading.kind === 'bad' && (problem || typed.trim() !== ''))
      return (
        <p id={id} className="mt-1 text-xs text-fail-700">
          {reading.message}
        </p>
      );
    if (reading.kind === 'ok')
      return (
        <p id={id} className="mt-1 text-xs text-ink-600" data-testid={`${id}-applies`}>
          Applies {fractionNote(reading.fraction, where)}
        </p>
      );
    return null;
  };

  const percentField = (k: (typeof PERCENT_RULES)[number]) => {
    const reading = readPercent(draft[k], 100);
    const noteId = `rule-${k}-note`;
    return (
      <div className="grid grid-cols-[minmax(0,1fr)_9rem] sm:grid-cols-[minmax(0,1fr)_11rem] items-start gap-3 py-2.5">
        <label htmlFor={`rule-${k}`}>
          <span className="block font-medium">{ruleLabel[k]}</span>
          <span className="block text-xs text-ink-600">{help[k]} In per cent, 0 to 100. Empty: not set.</span>
        </label>
        <div>
          <div className="flex items-center gap-1.5">
            <input
              id={`rule-${k}`}
              name={k}
              inputMode="decimal"
              className={`${inputClass} text-right`}
              value={draft[k]}
              aria-invalid={reading.kind === 'bad' || reading.kind === 'fraction-like'}
              aria-describedby={noteId}
              onChange={(e) => setDraft({ ...draft, [k]: e.target.value })}
            />
            <span className="w-4 text-sm text-ink-600">%</span>
          </div>
          {percentNote(noteId, draft[k], reading, problems[k], 'in pleat.config.yaml', (v) => setDraft({ ...draft, [k]: v }))}
        </div>
      </div>
    );
  };

  /** A field of a whole number or a number with a unit (registers, overflows, dB), checked on saving. */
  const plainField = (k: 'max_registers' | 'max_overflows' | 'min_sqnr_db', inputMode: 'numeric' | 'decimal', unit: string) => (
    <div className="grid grid-cols-[minmax(0,1fr)_9rem] sm:grid-cols-[minmax(0,1fr)_11rem] items-start gap-3 py-2.5">
      <label htmlFor={`rule-${k}`}>
        <span className="block font-medium">{label[k]}</span>
        <span className="block text-xs text-ink-600">
          {help[k]}
          {unit ? ` In ${unit}.` : ''} Empty: not set.
        </span>
      </label>
      <div>
        <div className="flex items-center gap-1.5">
          <input
            id={`rule-${k}`}
            name={k}
            inputMode={inputMode}
            className={`${inputClass} text-right`}
            value={draft[k]}
            aria-invalid={!!problems[k]}
            aria-describedby={problems[k] ? `rule-${k}-problem` : undefined}
            onChange={(e) => setDraft({ ...draft, [k]: e.target.value })}
          />
          {/* The width of the `%` of the per-cent fields, so the inputs line up. */}
          {unit ? <span className="w-4 text-sm text-ink-600">{unit}</span> : <span className="w-4" aria-hidden="true" />}
        </div>
        {problems[k] && (
          <p id={`rule-${k}-problem`} className="mt-1 text-xs text-fail-700">
            {problems[k]}
          </p>
        )}
      </div>
    </div>
  );

  const error = save.error ?? updateProject.error;
  return (
    <form onSubmit={submit} aria-label="Team rules" className="divide-y divide-ink-100">
      <div className="grid gap-2 pb-2.5">
        <label htmlFor="rule-negative_delays">
          <span className="block font-medium">{ruleLabel.negative_delays}</span>
          <span className="block text-xs text-ink-600">{help.negative_delays}</span>
        </label>
        <select
          id="rule-negative_delays"
          name="negative_delays"
          className={inputClass}
          value={draft.negative_delays}
          onChange={(e) => setDraft({ ...draft, negative_delays: e.target.value as Draft['negative_delays'] })}
        >
          <option value="">not set: the repository decides (default retime)</option>
          {(['fail', 'retime', 'warn'] as const).map((p) => (
            <option key={p} value={p}>
              {policyText[p]}
            </option>
          ))}
        </select>
      </div>
      {percentField('min_utilization')}
      {percentField('min_unit_utilization')}
      {plainField('max_registers', 'numeric', '')}
      <div className="pt-3 text-xs font-medium uppercase tracking-wide text-ink-600">Gates of pleat simulate (a check does not simulate)</div>
      {plainField('max_overflows', 'numeric', '')}
      {plainField('min_sqnr_db', 'decimal', 'dB')}
      <div className="grid grid-cols-[minmax(0,1fr)_9rem] sm:grid-cols-[minmax(0,1fr)_11rem] items-start gap-3 py-2.5">
        <label htmlFor="regression-tolerance">
          <span className="block font-medium">Regression tolerance</span>
          <span className="block text-xs text-ink-600">Watchers get e-mail when a run gets worse than the base branch by more than this. In per cent.</span>
        </label>
        <div>
          <div className="flex items-center gap-1.5">
            <input
              id="regression-tolerance"
              inputMode="decimal"
              className={`${inputClass} text-right`}
              value={tolerance}
              aria-invalid={tol.kind === 'bad' || tol.kind === 'fraction-like' || tol.kind === 'empty'}
              aria-describedby="regression-tolerance-note"
              onChange={(e) => setTolerance(e.target.value)}
            />
            <span className="w-4 text-sm text-ink-600">%</span>
          </div>
          {tol.kind === 'empty' && problems.tolerance ? (
            <p id="regression-tolerance-note" className="mt-1 text-xs text-fail-700">
              {problems.tolerance}
            </p>
          ) : (
            percentNote('regression-tolerance-note', tolerance, tol, problems.tolerance, 'as a fraction', setTolerance)
          )}
        </div>
      </div>
      <div className="space-y-3 pt-4">
        <div data-testid="rules-pending" aria-live="polite">
          {changes.length > 0 && (
            <>
              <div className="text-sm font-medium text-ink-800">Saving applies</div>
              <ul className="mt-1 space-y-0.5 text-sm text-ink-700">
                {changes.map((c) => (
                  <li key={c.label}>
                    {c.label}: <span className="text-ink-600">{c.from}</span> <span aria-label="changes to">→</span> <strong>{c.to}</strong>
                  </li>
                ))}
              </ul>
            </>
          )}
        </div>
        <label className="block text-sm font-medium text-ink-800">
          Reason for the change
          <input
            className={`${inputClass} mt-1`}
            maxLength={500}
            placeholder="e.g. the new FPGA has fewer registers to spare"
            value={reason}
            onChange={(e) => setReason(e.target.value)}
          />
          <span className="mt-1 block text-xs font-normal text-ink-600">Kept with the change in the history below.</span>
        </label>
        <FormError error={error ? errorMessage(error) : null} />
        {saved && (
          <p role="status" className="text-sm font-medium text-pass-700">
            {saved}
          </p>
        )}
        <button type="submit" className={buttonClass.accent} disabled={save.isPending || updateProject.isPending}>
          {save.isPending || updateProject.isPending ? 'Saving…' : 'Save the rules'}
        </button>
      </div>
    </form>
  );
}

function History({ slug, mayEdit }: { slug: string; mayEdit: boolean }) {
  const q = useRuleHistory(slug);
  const revert = useRevertRules(slug);
  const [reverted, setReverted] = useState<string | null>(null);
  if (q.isPending) return <Loading label="Loading the changes…" />;
  if (q.error) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;
  const changes: RuleChange[] = q.data.pages.flatMap((p) => p.changes);
  if (changes.length === 0) return <EmptyState title="No rule has been changed yet" />;
  return (
    <div>
      <ScrollRegion label="Changes to the team rules">
        <table className={tableClass.table} data-testid="rule-history">
          <caption className="sr-only">Changes to the team rules, newest first</caption>
          <ColumnHeads columns={['When', 'Who', 'Rule', 'Change', 'Reason', ...(mayEdit ? [<span key="r" className="sr-only">Revert</span>] : [])]} />
          <tbody>
            {changes.map((c, i) => (
              <tr key={c.id} data-change={c.id}>
                <td className={`${tableClass.td} whitespace-nowrap`} title={dateTime(c.at)}>
                  {ago(c.at)}
                </td>
                <td className={tableClass.td}>{c.by?.name ?? <span className="text-ink-500">a removed account</span>}</td>
                <td className={tableClass.td}>{(label as Record<string, string>)[c.rule] ?? (c.rule === 'regression_tolerance' ? 'Regression tolerance' : c.rule === 'branch_run_days' ? 'Keeping runs (days)' : c.rule)}</td>
                <td className={tableClass.td}>
                  <span className="text-ink-600">{ruleValueText(c.rule, c.oldValue)}</span> <span aria-label="changed to">→</span>{' '}
                  <span className="font-bold">{ruleValueText(c.rule, c.newValue)}</span>
                </td>
                <td className={`${tableClass.td} text-ink-700`}>{c.reason ?? <span className="text-ink-600">none given</span>}</td>
                {mayEdit && (
                  <td className={tableClass.td}>
                    {i > 0 && (
                      <button
                        type="button"
                        className={`${buttonClass.secondary} whitespace-nowrap`}
                        disabled={revert.isPending}
                        onClick={() => {
                          // The prompt is the confirmation: cancelling it reverts nothing.
                          const why = window.prompt(`Go back to the rules as they were right after change #${c.id}? Every later change is undone (and kept in the history). Reason:`, '');
                          if (why === null) return;
                          setReverted(null);
                          revert.mutate(
                            { to: c.id, reason: why.trim() || undefined },
                            { onSuccess: (r) => setReverted(r.changed.length ? `Back to the rules after change #${c.id}: ${r.changed.length} change${r.changed.length === 1 ? '' : 's'} undone.` : 'Nothing to undo.') },
                          );
                        }}
                      >
                        Back to here<span className="sr-only"> (change #{c.id})</span>
                      </button>
                    )}
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      </ScrollRegion>
      <div className="mt-3">
        <FormError error={revert.error ? errorMessage(revert.error) : null} />
        {reverted && (
          <p role="status" className="text-sm font-medium text-pass-700">
            {reverted}
          </p>
        )}
      </div>
      {q.hasNextPage && (
        <button type="button" className={`${buttonClass.secondary} mt-3`} onClick={() => void q.fetchNextPage()} disabled={q.isFetchingNextPage}>
          {q.isFetchingNextPage ? 'Loading…' : 'Show older changes'}
        </button>
      )}
    </div>
  );
}
