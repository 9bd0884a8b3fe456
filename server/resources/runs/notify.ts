// After a new run: tell the branch's watchers when the branch went from pass to failing, or when a
// design regressed against the base past the project's tolerance and had not already regressed
// in the branch's previous run (one mail per new problem, not one per push). The mail names the
// design, the rule, the values before and after, and links the run.
import { QueryTypes } from 'sequelize';
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { branchAlertMessage } from '../../mail/messages';
import { compareRun, loadDesignRows, RUN_COLUMNS, type Comparison, type DesignRow, type RunRow } from './compare';

const WATCHED: Record<string, string> = { utilization: 'utilization', registerMinimum: 'register minimum' };
const BASIS: Record<string, string> = { 'merge-base': 'at the merge base', 'nearest-earlier': 'its latest run before this one', none: '' };
const pct = (v: number | null) => (v === null ? '-' : `${(v * 100).toFixed(1)}%`);
const count = (v: number | null) => (v === null ? '-' : String(v));

function regressedKeys(c: Comparison): Map<string, string> {
  const out = new Map<string, string>();
  for (const d of c.designs) {
    for (const r of d.regressions) {
      if (!(r in WATCHED)) continue;
      const m = r === 'utilization' ? d.utilization : d.registerMinimum;
      const fmt = r === 'utilization' ? pct : count;
      out.set(`${d.name}\u0000${r}`, `${d.name}: ${WATCHED[r]} ${fmt(m.base)} -> ${fmt(m.current)} against ${c.baseBranch} (${BASIS[c.basis]}), `
        + `past the project's regression tolerance of ${(c.tolerance * 100).toFixed(1)}% (${d.file})`);
    }
  }
  return out;
}

/** The measures of a design as one phrase, for "before" and "now". */
const measures = (d: DesignRow | undefined) => (d ? `utilization ${pct(d.utilization)}, register minimum ${count(d.register_minimum)}, ${d.status}` : 'not in that run');

/**
 * Every design of the run that does not pass: the rule it breaks (with the value against the
 * limit) or the first error of its file, and its numbers in the branch's previous run and now.
 */
export function brokenDesigns(report: Report, now: DesignRow[], before: DesignRow[] | null): string[] {
  const out: string[] = [];
  for (const d of report.designs) {
    if (d.status === 'pass') continue;
    const name = d.name ?? d.file;
    let what: string;
    if (d.status === 'error') {
      const first = d.diagnostics.find((x) => x.severity === 'error') ?? d.diagnostics[0];
      what = first ? `cannot be checked: ${first.code} at ${d.file}${first.line ? `:${first.line}${first.column ? `:${first.column}` : ''}` : ''}: ${first.message}` : `cannot be checked (${d.file})`;
    } else {
      const rules = d.violations.map((v) => `rule ${v.rule} (${v.source}${v.unit ? `, unit ${v.unit}` : ''}): ${v.actual} against the limit ${v.limit}`);
      what = `breaks ${rules.length ? rules.join('; ') : 'a rule'} (${d.file})`;
    }
    const row = now.find((r) => r.design_name === d.name);
    const was = before?.find((r) => r.design_name === d.name);
    const values = row && before ? `; before: ${measures(was)}; now: ${measures(row)}` : '';
    out.push(`${name} ${what}${values}`);
  }
  return out;
}

export interface Alert {
  /** Why this run is news; empty when there is nothing new to say. */
  reasons: string[];
  /** The designs that do not pass, each with its rule and its values before and now. */
  broken: string[];
}

/** What to mail about this run. */
export async function alertFor(ctx: AppContext, project: Project, run: RunRow, report: Report | null): Promise<Alert> {
  const reasons: string[] = [];
  const [previous] = await ctx.db.sequelize.query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND (created_at, id) < ($3, $4)
     ORDER BY created_at DESC, id DESC LIMIT 1`,
    { bind: [project.id, run.branch, run.created_at, run.id], type: QueryTypes.SELECT },
  );
  if (previous?.verdict === 'pass' && run.verdict !== 'pass') {
    reasons.push(`went from pass to ${run.verdict} (${run.failed_count} failing, ${run.error_count} invalid of ${run.design_count} designs)`);
  }
  const { comparison, designs } = await compareRun(ctx, run, project);
  const now = regressedKeys(comparison);
  if (now.size) {
    const before = previous ? regressedKeys((await compareRun(ctx, previous, project)).comparison) : new Map<string, string>();
    for (const [key, text] of now) if (!before.has(key)) reasons.push(text);
  }
  if (!reasons.length || !report) return { reasons, broken: [] };
  const beforeRows = previous ? await loadDesignRows(ctx, [previous.id]) : null;
  return { reasons, broken: brokenDesigns(report, designs, beforeRows) };
}

export async function notifyWatchers(ctx: AppContext, project: Project, run: RunRow, report: Report | null = null): Promise<void> {
  // Watchers who can still read the project: active admins and active members. Most uploads
  // have none, so this is the only query they cost.
  const watchers = await ctx.db.sequelize.query<{ email: string }>(
    `SELECT u.email FROM watches w JOIN users u ON u.id = w.user_id
     WHERE w.project_id = $1 AND w.branch = $2 AND u.deactivated_at IS NULL
       AND (u.is_admin OR EXISTS (SELECT 1 FROM memberships m WHERE m.project_id = w.project_id AND m.user_id = u.id))`,
    { bind: [project.id, run.branch], type: QueryTypes.SELECT },
  );
  if (!watchers.length) return;
  const { reasons, broken } = await alertFor(ctx, project, run, report);
  if (!reasons.length) return;
  const link = `${ctx.config.publicUrl}/projects/${encodeURIComponent(project.slug)}/runs/${run.id}`;
  for (const w of watchers) {
    ctx.mail.send(branchAlertMessage({ to: w.email, projectName: project.name, branch: run.branch, commit: run.commit, reasons, broken, link }));
  }
}
