// After a new run: tell the branch's watchers when the branch went from pass to failing, or when a
// design regressed against the base past the project's tolerance and had not already regressed
// in the branch's previous run (one mail per new problem, not one per push).
import { QueryTypes } from 'sequelize';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { branchAlertMessage } from '../../mail/messages';
import { compareRun, RUN_COLUMNS, type Comparison, type RunRow } from './compare';

const WATCHED: Record<string, string> = { utilization: 'utilization', registerMinimum: 'register minimum' };

function regressedKeys(c: Comparison): Map<string, string> {
  const out = new Map<string, string>();
  for (const d of c.designs) {
    for (const r of d.regressions) {
      if (!(r in WATCHED)) continue;
      const m = r === 'utilization' ? d.utilization : d.registerMinimum;
      const fmt = (v: number | null) => (v === null ? '-' : r === 'utilization' ? `${(v * 100).toFixed(1)}%` : String(v));
      out.set(`${d.name}\u0000${r}`, `${d.name}: ${WATCHED[r]} ${fmt(m.base)} -> ${fmt(m.current)} against ${c.baseBranch} (${c.basis})`);
    }
  }
  return out;
}

/** The reasons to mail about this run; empty when there is nothing new to say. */
export async function alertReasons(ctx: AppContext, project: Project, run: RunRow): Promise<string[]> {
  const reasons: string[] = [];
  const [previous] = await ctx.db.sequelize.query<RunRow>(
    `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND (created_at, id) < ($3, $4)
     ORDER BY created_at DESC, id DESC LIMIT 1`,
    { bind: [project.id, run.branch, run.created_at, run.id], type: QueryTypes.SELECT },
  );
  if (previous?.verdict === 'pass' && run.verdict !== 'pass') {
    reasons.push(`went from pass to ${run.verdict} (${run.failed_count} failing, ${run.error_count} invalid of ${run.design_count} designs)`);
  }
  const now = regressedKeys((await compareRun(ctx, run, project)).comparison);
  if (now.size) {
    const before = previous ? regressedKeys((await compareRun(ctx, previous, project)).comparison) : new Map<string, string>();
    for (const [key, text] of now) if (!before.has(key)) reasons.push(text);
  }
  return reasons;
}

export async function notifyWatchers(ctx: AppContext, project: Project, run: RunRow): Promise<void> {
  // Watchers who can still read the project: active admins and active members. Most uploads
  // have none, so this is the only query they cost.
  const watchers = await ctx.db.sequelize.query<{ email: string }>(
    `SELECT u.email FROM watches w JOIN users u ON u.id = w.user_id
     WHERE w.project_id = $1 AND w.branch = $2 AND u.deactivated_at IS NULL
       AND (u.is_admin OR EXISTS (SELECT 1 FROM memberships m WHERE m.project_id = w.project_id AND m.user_id = u.id))`,
    { bind: [project.id, run.branch], type: QueryTypes.SELECT },
  );
  if (!watchers.length) return;
  const reasons = await alertReasons(ctx, project, run);
  if (!reasons.length) return;
  const link = `${ctx.config.publicUrl}/projects/${encodeURIComponent(project.slug)}/runs/${run.id}`;
  for (const w of watchers) {
    ctx.mail.send(branchAlertMessage({ to: w.email, projectName: project.name, branch: run.branch, commit: run.commit, reasons, link }));
  }
}
