// The server's periodic clean-up, a timer in every server process; an advisory lock makes one
// process at a time do the work. It deletes runs of non-base branches older than their
// project's retention (projects.branch_run_days) in small batches, each its own short statement
// (readers of history pages never wait: PostgreSQL's readers take no row locks, and each batch
// locks only the rows it deletes, skipping rows another statement holds), and prunes expired
// invitations, spent rate-limit counters and revoked sessions past their expiry, and plan and
// sweep jobs finished more than JOB_RETENTION_DAYS ago.
import { QueryTypes } from 'sequelize';
import type { AppContext } from './context';

export interface MaintenanceResult {
  ran: boolean;
  runsDeleted: number;
  branchesDeleted: number;
  invitationsDeleted: number;
  rateLimitsDeleted: number;
  revokedSessionsDeleted: number;
  jobsDeleted: number;
}

/** Finished plan and sweep jobs (done, failed, cancelled) are kept this long, their results with them. */
export const JOB_RETENTION_DAYS = 30;

const EMPTY: MaintenanceResult = { ran: false, runsDeleted: 0, branchesDeleted: 0, invitationsDeleted: 0, rateLimitsDeleted: 0, revokedSessionsDeleted: 0, jobsDeleted: 0 };

async function deleted(ctx: AppContext, sql: string, bind: unknown[] = []): Promise<number> {
  const rows = await ctx.db.sequelize.query<{ n: string }>(`WITH gone AS (${sql} RETURNING 1) SELECT count(*) AS n FROM gone`, { bind, type: QueryTypes.SELECT });
  return Number(rows[0]?.n ?? 0);
}

/** One pass; returns what it deleted (ran: false when another process holds the lock). */
export async function runMaintenance(ctx: AppContext, o: { batch?: number } = {}): Promise<MaintenanceResult> {
  const batch = o.batch ?? 500;
  const q = ctx.db.sequelize;
  // The lock is held by a transaction on one connection while the batches commit on others.
  const tx = await q.transaction();
  try {
    const [got] = await q.query<{ ok: boolean }>(
      "SELECT pg_try_advisory_xact_lock(hashtext('pleat-maintenance:' || current_schema())) AS ok", { type: QueryTypes.SELECT, transaction: tx },
    );
    if (!got?.ok) return { ...EMPTY };
    const result: MaintenanceResult = { ...EMPTY, ran: true };
    for (;;) {
      const n = await deleted(ctx, `DELETE FROM runs WHERE id IN (
          SELECT r.id FROM runs r JOIN projects p ON p.id = r.project_id
          WHERE p.branch_run_days IS NOT NULL AND r.branch <> p.base_branch
            AND r.created_at < now() - p.branch_run_days * interval '1 day'
          ORDER BY r.id LIMIT $1 FOR UPDATE OF r SKIP LOCKED)`, [batch]);
      result.runsDeleted += n;
      if (n < batch) break;
    }
    // A branch whose every run has gone leaves the branch list too.
    result.branchesDeleted = await deleted(ctx, `DELETE FROM branches b WHERE b.last_run_id IS NULL
        AND NOT EXISTS (SELECT 1 FROM runs r WHERE r.project_id = b.project_id AND r.branch = b.name)`);
    result.invitationsDeleted = await deleted(ctx, 'DELETE FROM invitations WHERE accepted_at IS NULL AND expires_at < now()');
    result.rateLimitsDeleted = await deleted(ctx, 'DELETE FROM rate_limits WHERE reset_at < now()');
    result.revokedSessionsDeleted = await deleted(ctx, 'DELETE FROM revoked_sessions WHERE expires_at < now()');
    // Finished jobs past their retention, with their attempts (ON DELETE CASCADE); queued and running ones stay.
    for (;;) {
      const n = await deleted(ctx, `DELETE FROM jobs WHERE id IN (
          SELECT id FROM jobs WHERE status IN ('done', 'failed', 'cancelled') AND finished_at < now() - $2 * interval '1 day'
          ORDER BY id LIMIT $1 FOR UPDATE SKIP LOCKED)`, [batch, JOB_RETENTION_DAYS]);
      result.jobsDeleted += n;
      if (n < batch) break;
    }
    return result;
  } finally {
    await tx.rollback().catch(() => {});
  }
}

/** Starts the timer (first pass after a minute); returns the function that stops it. */
export function startMaintenance(ctx: AppContext, everyMs: number, firstMs = 60_000): () => void {
  let busy = false;
  const tick = async () => {
    if (busy) return;
    busy = true;
    try {
      const r = await runMaintenance(ctx);
      const total = r.runsDeleted + r.invitationsDeleted + r.rateLimitsDeleted + r.revokedSessionsDeleted + r.branchesDeleted + r.jobsDeleted;
      if (r.ran && total > 0) {
        ctx.log(`maintenance: deleted ${r.runsDeleted} expired branch runs, ${r.branchesDeleted} empty branches, ${r.invitationsDeleted} expired invitations, ${r.rateLimitsDeleted} rate-limit counters, ${r.revokedSessionsDeleted} revoked sessions, ${r.jobsDeleted} finished jobs`);
      }
    } catch (err) {
      // An outage is reported by the request path; the next pass tries again.
      if (!ctx.outage?.report(err)) ctx.log(`maintenance failed: ${(err as Error).message}`);
    } finally {
      busy = false;
    }
  };
  const first = setTimeout(() => void tick(), firstMs);
  const timer = setInterval(() => void tick(), everyMs);
  first.unref();
  timer.unref();
  return () => {
    clearTimeout(first);
    clearInterval(timer);
  };
}
