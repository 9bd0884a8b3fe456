// Our record of plan and sweep jobs (tables jobs and job_attempts, server/db/migrations/002-jobs.ts).
// Every write of a worker names its attempt: once a later attempt has taken the job, an earlier
// worker that comes back can neither report progress nor complete it.
import { QueryTypes, type Sequelize } from 'sequelize';
import type { JobAttempt, JobDetail, JobKind, JobParams, JobProgress, JobResult, JobStatus, JobSummary } from '../../shared/report/api';

export interface JobRow {
  id: number;
  project_id: number;
  project_slug: string;
  project_name: string;
  kind: JobKind;
  status: JobStatus;
  source_run_id: number | null;
  design_file: string;
  design_name: string | null;
  params: JobParams;
  progress: JobProgress | null;
  error: string | null;
  attempt: number;
  cancel_requested: boolean;
  queue_id: string | null;
  created_by: number | null;
  creator_name: string | null;
  created_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
}

const SUMMARY = `j.id, j.project_id, p.slug AS project_slug, p.name AS project_name, j.kind, j.status, j.source_run_id,
  j.design_file, j.design_name, j.params, j.progress, j.error, j.attempt, j.cancel_requested, j.queue_id::text AS queue_id,
  j.created_by, u.name AS creator_name, j.created_at, j.started_at, j.finished_at`;
const FROM = 'jobs j JOIN projects p ON p.id = j.project_id LEFT JOIN users u ON u.id = j.created_by';

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export function presentJob(r: JobRow): JobSummary {
  return {
    id: r.id,
    project: { slug: r.project_slug, name: r.project_name },
    kind: r.kind,
    status: r.status,
    design: { file: r.design_file, name: r.design_name, runId: r.source_run_id },
    params: r.params,
    progress: r.progress,
    error: r.error,
    cancelRequested: r.cancel_requested,
    createdBy: r.created_by !== null && r.creator_name !== null ? { id: r.created_by, name: r.creator_name } : null,
    createdAt: r.created_at.toISOString(),
    startedAt: iso(r.started_at),
    finishedAt: iso(r.finished_at),
  };
}

export async function insertJob(q: Sequelize, j: {
  projectId: number; kind: JobKind; runId: number | null; file: string; name: string | null; text: string; params: JobParams; userId: number;
}, o: { maxActivePerUser?: number } = {}): Promise<number | null> {
  // One transaction holding a lock per person: two starts at once cannot both pass the count.
  return q.transaction(async (transaction) => {
    if (o.maxActivePerUser !== undefined) {
      await q.query("SELECT pg_advisory_xact_lock(hashtext('pleat-jobs-of:' || current_schema() || ':' || $1::text))", { bind: [j.userId], transaction });
      const [active] = await q.query<{ n: string }>(`SELECT count(*) AS n FROM jobs WHERE created_by = $1 AND status IN ('queued', 'running')`, { bind: [j.userId], type: QueryTypes.SELECT, transaction });
      if (Number(active?.n ?? 0) >= o.maxActivePerUser) return null;
    }
    const [row] = await q.query<{ id: number }>(
      `INSERT INTO jobs (project_id, kind, source_run_id, design_file, design_name, design_text, params, created_by)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8) RETURNING id`,
      { bind: [j.projectId, j.kind, j.runId, j.file, j.name, j.text, JSON.stringify(j.params), j.userId], type: QueryTypes.SELECT, transaction },
    );
    return row!.id;
  });
}

export async function setQueueId(q: Sequelize, id: number, queueId: string): Promise<void> {
  await q.query('UPDATE jobs SET queue_id = $2, updated_at = now() WHERE id = $1', { bind: [id, queueId] });
}

export async function findJob(q: Sequelize, id: number): Promise<JobRow | null> {
  const [row] = await q.query<JobRow>(`SELECT ${SUMMARY} FROM ${FROM} WHERE j.id = $1`, { bind: [id], type: QueryTypes.SELECT });
  return row ?? null;
}

export async function listJobs(q: Sequelize, projectId: number, limit: number): Promise<JobRow[]> {
  return q.query<JobRow>(`SELECT ${SUMMARY} FROM ${FROM} WHERE j.project_id = $1 ORDER BY j.created_at DESC, j.id DESC LIMIT $2`, {
    bind: [projectId, limit], type: QueryTypes.SELECT,
  });
}

export async function jobDetail(q: Sequelize, row: JobRow): Promise<JobDetail> {
  const [extra] = await q.query<{ result: JobResult | null; attempts: JobAttempt[] | null }>(
    `SELECT j.result, (SELECT json_agg(json_build_object('attempt', a.attempt, 'worker', a.worker, 'outcome', a.outcome, 'message', a.message,
              'startedAt', a.started_at, 'endedAt', a.ended_at) ORDER BY a.attempt) FROM job_attempts a WHERE a.job_id = j.id) AS attempts
     FROM jobs j WHERE j.id = $1`,
    { bind: [row.id], type: QueryTypes.SELECT },
  );
  return { ...presentJob(row), attempts: extra?.attempts ?? [], result: extra?.result ?? null };
}

export async function designText(q: Sequelize, id: number): Promise<string | null> {
  const [row] = await q.query<{ design_text: string }>('SELECT design_text FROM jobs WHERE id = $1', { bind: [id], type: QueryTypes.SELECT });
  return row?.design_text ?? null;
}

/**
 * A person asks to cancel. A queued job is cancelled at once; a running one is flagged, and its
 * worker stops at the engine's next check. Returns the status after the request.
 */
export async function requestCancel(q: Sequelize, id: number): Promise<JobStatus | null> {
  const [row] = await q.query<{ status: JobStatus }>(
    `UPDATE jobs SET cancel_requested = true, updated_at = now(),
       status = CASE WHEN status = 'queued' THEN 'cancelled' ELSE status END,
       finished_at = CASE WHEN status = 'queued' THEN now() ELSE finished_at END
     WHERE id = $1 RETURNING status`,
    { bind: [id], type: QueryTypes.SELECT },
  );
  return row?.status ?? null;
}

// ---------------------------------------------------------------- the worker's side

export interface Claim {
  attempt: number;
  kind: JobKind;
  params: JobParams;
  text: string;
  file: string;
  /** The attempt before this one ended without its worker saying so (the worker was lost). */
  previousLost: boolean;
}

/**
 * Takes the job for a new attempt, or null when there is nothing to do (finished, cancelled, or
 * unknown). An attempt still marked running belonged to a worker the queue gave up on: it is
 * recorded as lost.
 */
export async function claimJob(q: Sequelize, id: number, worker: string): Promise<Claim | null> {
  return q.transaction(async (transaction) => {
    const [job] = await q.query<{ status: JobStatus; attempt: number; cancel_requested: boolean; kind: JobKind; params: JobParams; design_text: string; design_file: string }>(
      'SELECT status, attempt, cancel_requested, kind, params, design_text, design_file FROM jobs WHERE id = $1 FOR UPDATE',
      { bind: [id], type: QueryTypes.SELECT, transaction },
    );
    if (!job || !['queued', 'running'].includes(job.status)) return null;
    const lost = await q.query(
      `UPDATE job_attempts SET outcome = 'lost', ended_at = now(),
         message = 'The worker stopped answering during this attempt (killed, crashed or cut off); the queue gave the job to another attempt.'
       WHERE job_id = $1 AND outcome = 'running' RETURNING attempt`,
      { bind: [id], type: QueryTypes.SELECT, transaction },
    );
    if (job.cancel_requested) {
      await q.query(`UPDATE jobs SET status = 'cancelled', finished_at = now(), updated_at = now() WHERE id = $1`, { bind: [id], transaction });
      return null;
    }
    const attempt = job.attempt + 1;
    await q.query(
      `UPDATE jobs SET status = 'running', attempt = $2, started_at = COALESCE(started_at, now()), progress = NULL, updated_at = now() WHERE id = $1`,
      { bind: [id, attempt], transaction },
    );
    await q.query('INSERT INTO job_attempts (job_id, attempt, worker) VALUES ($1, $2, $3)', { bind: [id, attempt, worker], transaction });
    return { attempt, kind: job.kind, params: job.params, text: job.design_text, file: job.design_file, previousLost: lost.length > 0 };
  });
}

export async function writeProgress(q: Sequelize, id: number, attempt: number, progress: JobProgress): Promise<void> {
  await q.query(`UPDATE jobs SET progress = $3, updated_at = now() WHERE id = $1 AND attempt = $2 AND status = 'running'`, {
    bind: [id, attempt, JSON.stringify(progress)],
  });
}

export async function cancelRequested(q: Sequelize, id: number): Promise<boolean> {
  const [row] = await q.query<{ cancel_requested: boolean }>('SELECT cancel_requested FROM jobs WHERE id = $1', { bind: [id], type: QueryTypes.SELECT });
  return row?.cancel_requested ?? true;
}

/**
 * Ends an attempt. Only the job's current attempt, still running, may end it; returns false when
 * a later attempt has taken over (then nothing is written to the job).
 */
export async function finishAttempt(q: Sequelize, id: number, attempt: number, end: { status: 'done' | 'failed' | 'cancelled'; result?: JobResult; error?: string }): Promise<boolean> {
  return q.transaction(async (transaction) => {
    const rows = await q.query(
      `UPDATE jobs SET status = $3, result = $4, error = $5, finished_at = now(), updated_at = now()
       WHERE id = $1 AND attempt = $2 AND status = 'running' RETURNING id`,
      { bind: [id, attempt, end.status, end.result ? JSON.stringify(end.result) : null, end.error ?? null], type: QueryTypes.SELECT, transaction },
    );
    const won = rows.length === 1;
    await q.query(
      `UPDATE job_attempts SET outcome = $3, message = $4, ended_at = now() WHERE job_id = $1 AND attempt = $2 AND outcome = 'running'`,
      { bind: [id, attempt, won ? end.status : 'lost', won ? end.error ?? null : 'A later attempt had taken the job over; this one was discarded.'], transaction },
    );
    return won;
  });
}

/** The queue gave up on a job (every attempt lost its worker): say so on the job. */
export async function failLostJob(q: Sequelize, id: number, message: string): Promise<void> {
  await q.transaction(async (transaction) => {
    await q.query(
      `UPDATE job_attempts SET outcome = 'lost', ended_at = now(),
         message = 'The worker stopped answering during this attempt (killed, crashed or cut off).'
       WHERE job_id = $1 AND outcome = 'running'`,
      { bind: [id], transaction },
    );
    await q.query(
      `UPDATE jobs SET status = CASE WHEN cancel_requested THEN 'cancelled' ELSE 'failed' END,
         error = CASE WHEN cancel_requested THEN error ELSE $2 END, finished_at = now(), updated_at = now()
       WHERE id = $1 AND status IN ('queued', 'running')`,
      { bind: [id, message], transaction },
    );
  });
}
