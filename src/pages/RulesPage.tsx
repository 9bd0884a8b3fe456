import { useEffect, useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useRuleHistory, useRules, useSaveRules, useUpdateProject } from '../api/hooks';
import { can } from '../api/roles';
import type { NegativeDelayPolicy, RuleName, Rules } from '../../shared/types';
import type { RuleChange, TeamRules } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { useProjectContext } from '../components/ProjectLayout';
import { ColumnHeads, PageHeader, Panel, buttonClass, inputClass, tableClass } from '../components/Panel';
import { ruleLabel } from '../components/ViolationsList';
import { EmptyState, ErrorState, Loading, QueryState } from '../components/States';
import { ago, dateTime, pct } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';

const policyText: Record<NegativeDelayPolicy, string> = {
  fail: 'fail: any negative folded delay fails the check',
  retime: 'retime: fail only when no retiming removes them',
  warn: 'warn: report them, never fail',
};

const help: Record<RuleName, string> = {
  negative_delays: 'What a negative folded delay does to the verdict.',
  min_utilization: 'The whole design must keep its units at least this busy.',
  min_unit_utilization: 'Every unit must be at least this busy.',
  max_registers: 'The lifetime-analysis register minimum may not exceed this.',
};

/** Form state: text as typed, so that an empty field means “not set”. */
interface Draft {
  negative_delays: '' | NegativeDelayPolicy;
  min_utilization: string;
  min_unit_utilization: string;
  max_registers: string;
}

function toDraft(r: Rules): Draft {
  return {
    negative_delays: r.negative_delays ?? '',
    min_utilization: r.min_utilization === undefined ? '' : String(Math.round(r.min_utilization * 1000) / 10),
    min_unit_utilization: r.min_unit_utilization === undefined ? '' : String(Math.round(r.min_unit_utilization * 1000) / 10),
    max_registers: r.max_registers === undefined ? '' : String(r.max_registers),
  };
}

function fromDraft(d: Draft): { rules: Rules; problems: Partial<Record<RuleName, string>> } {
  const rules: Rules = {};
  const problems: Partial<Record<RuleName, string>> = {};
  if (d.negative_delays) rules.negative_delays = d.negative_delays;
  for (const k of ['min_utilization', 'min_unit_utilization'] as const) {
    if (d[k].trim() === '') continue;
    const v = Number(d[k]);
    if (!Number.isFinite(v) || v < 0 || v > 100) problems[k] = 'A percentage from 0 to 100.';
    else rules[k] = Math.round(v * 10) / 1000;
  }
  if (d.max_registers.trim() !== '') {
    const v = Number(d.max_registers);
    if (!Number.isInteger(v) || v < 0) problems.max_registers = 'A whole number, 0 or more.';
    else rules.max_registers = v;
  }
  return { rules, problems };
}

export function ruleValueText(rule: string, v: unknown): string {
  if (v === null || v === undefined) return 'not set';
  if ((rule === 'min_utilization' || rule === 'min_unit_utilization' || rule === 'regression_tolerance') && typeof v === 'number') return pct(v);
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
        <Panel id="rule-history" title="Changes" subtitle="Every change to the team rules, with who made it and when">
          <History slug={project.slug} />
        </Panel>
      </div>
    </div>
  );
}

function RulesReadOnly({ data }: { data: TeamRules }) {
  const names = Object.keys(ruleLabel) as RuleName[];
  return (
    <div>
      <dl className="divide-y divide-ink-100" data-testid="rules-readonly">
        {names.map((n) => (
          <div key={n} className="grid grid-cols-[1fr_auto] gap-3 py-2.5">
            <dt>
              <div className="font-medium">{ruleLabel[n]}</div>
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
  const [tolerance, setTolerance] = useState(String(Math.round(data.regressionTolerance * 1000) / 10));
  const [problems, setProblems] = useState<Partial<Record<RuleName | 'tolerance', string>>>({});
  const [saved, setSaved] = useState<string | null>(null);
  useEffect(() => setDraft(toDraft(data.rules)), [data.rules]);

  const submit = async (e: FormEvent) => {
    e.preventDefault();
    setSaved(null);
    const { rules, problems: p } = fromDraft(draft);
    const tol = Number(tolerance);
    const all: typeof problems = { ...p };
    if (!Number.isFinite(tol) || tol < 0 || tol > 1000) all.tolerance = 'A percentage, 0 or more.';
    setProblems(all);
    if (Object.keys(all).length) return;
    try {
      const r = await save.mutateAsync(rules);
      let n = r.changed.length;
      const newTol = Math.round(tol * 10) / 1000;
      if (Math.abs(newTol - data.regressionTolerance) > 1e-9) {
        await updateProject.mutateAsync({ regressionTolerance: newTol });
        n++;
      }
      setSaved(n === 0 ? 'Nothing changed.' : `Saved ${n} change${n === 1 ? '' : 's'}. The next pleat check applies them.`);
    } catch {
      /* shown below from the mutation's error */
    }
  };

  const field = (k: 'min_utilization' | 'min_unit_utilization' | 'max_registers', unit: string) => (
    <div className="grid grid-cols-[1fr_9rem] items-start gap-3 py-2.5">
      <label htmlFor={`rule-${k}`}>
        <span className="block font-medium">{ruleLabel[k]}</span>
        <span className="block text-xs text-ink-600">{help[k]} Empty: not set.</span>
      </label>
      <div>
        <div className="flex items-center gap-1.5">
          <input
            id={`rule-${k}`}
            name={k}
            inputMode="decimal"
            className={`${inputClass} text-right`}
            value={draft[k]}
            aria-invalid={!!problems[k]}
            aria-describedby={problems[k] ? `rule-${k}-problem` : undefined}
            onChange={(e) => setDraft({ ...draft, [k]: e.target.value })}
          />
          <span className="w-4 text-sm text-ink-600">{unit}</span>
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
      {field('min_utilization', '%')}
      {field('min_unit_utilization', '%')}
      {field('max_registers', '')}
      <div className="grid grid-cols-[1fr_9rem] items-start gap-3 py-2.5">
        <label htmlFor="regression-tolerance">
          <span className="block font-medium">Regression tolerance</span>
          <span className="block text-xs text-ink-600">Watchers get e-mail when a run gets worse than the base branch by more than this.</span>
        </label>
        <div>
          <div className="flex items-center gap-1.5">
            <input
              id="regression-tolerance"
              inputMode="decimal"
              className={`${inputClass} text-right`}
              value={tolerance}
              aria-invalid={!!problems.tolerance}
              onChange={(e) => setTolerance(e.target.value)}
            />
            <span className="w-4 text-sm text-ink-600">%</span>
          </div>
          {problems.tolerance && <p className="mt-1 text-xs text-fail-700">{problems.tolerance}</p>}
        </div>
      </div>
      <div className="space-y-3 pt-4">
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

function History({ slug }: { slug: string }) {
  const q = useRuleHistory(slug);
  if (q.isPending) return <Loading label="Loading the changes…" />;
  if (q.error) return <ErrorState error={q.error} onRetry={() => void q.refetch()} />;
  const changes: RuleChange[] = q.data.pages.flatMap((p) => p.changes);
  if (changes.length === 0) return <EmptyState title="No rule has been changed yet" />;
  return (
    <div>
      <div className="overflow-x-auto">
        <table className={tableClass.table} data-testid="rule-history">
          <caption className="sr-only">Changes to the team rules, newest first</caption>
          <ColumnHeads columns={['When', 'Who', 'Rule', 'Change']} />
          <tbody>
            {changes.map((c) => (
              <tr key={c.id}>
                <td className={`${tableClass.td} whitespace-nowrap`} title={dateTime(c.at)}>
                  {ago(c.at)}
                </td>
                <td className={tableClass.td}>{c.by?.name ?? <span className="text-ink-500">a removed account</span>}</td>
                <td className={tableClass.td}>{(ruleLabel as Record<string, string>)[c.rule] ?? (c.rule === 'regression_tolerance' ? 'Regression tolerance' : c.rule)}</td>
                <td className={tableClass.td}>
                  <span className="text-ink-600">{ruleValueText(c.rule, c.oldValue)}</span> <span aria-label="changed to">→</span>{' '}
                  <span className="font-bold">{ruleValueText(c.rule, c.newValue)}</span>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {q.hasNextPage && (
        <button type="button" className={`${buttonClass.secondary} mt-3`} onClick={() => void q.fetchNextPage()} disabled={q.isFetchingNextPage}>
          {q.isFetchingNextPage ? 'Loading…' : 'Show older changes'}
        </button>
      )}
    </div>
  );
}
