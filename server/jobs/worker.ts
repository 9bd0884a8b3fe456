// A worker process (`server/main.ts worker`): takes plan and sweep jobs from the queue one at a
// time, runs the engine on them, writes progress and the result into the job's row. Any number
// of workers, on any machines, may share one database; the queue hands each job to one of them
// (pg-boss fetches with SELECT ... FOR UPDATE SKIP LOCKED). A worker that dies mid-job is noticed
// by the others' supervisor once the job's expiry passes; the job is then tried again, or, after
// the last try, marked failed with a message (docs/server.md, section Jobs).
import { hostname } from 'node:os';
import PgBoss from 'pg-boss';
import type { JobParams, JobProgress } from '../../shared/api';
import type { Config } from '../config';
import type { Db } from '../db/index';
import { bossOptions, ensureQueues, LOST_QUEUE, PLAN_QUEUE, type QueueMessage } from './queue';
import { JobInputError, runJob, type Planner } from './run';
import { cancelRequested, claimJob, failLostJob, finishAttempt, writeProgress } from './store';

/** The engine's own budget for a job: the time limit per plan, times the factors of a sweep. */
export function budgetSeconds(kind: 'plan' | 'sweep', params: JobParams): number {
  return params.timeLimitSeconds * (kind === 'sweep' ? Math.max(1, params.factors?.length ?? 1) : 1);
}

/** After budget + grace/2 the worker stops the engine itself; after budget + grace the queue counts the worker as lost. */
export function expireSeconds(config: Config, kind: 'plan' | 'sweep', params: JobParams): number {
  return Math.ceil(budgetSeconds(kind, params) + config.jobs.graceSeconds);
}

const PROGRESS_MS = 300;
const CANCEL_POLL_MS = 500;

export interface WorkerHandle {
  name: string;
  stop(): Promise<void>;
}

export async function startWorker(config: Config, db: Db, planner: Planner, log: (msg: string) => void): Promise<WorkerHandle> {
  const q = db.sequelize;
  const name = `${hostname()}:${process.pid}`;
  const boss = new PgBoss(bossOptions(config, 'worker'));
  boss.on('error', (err) => log(`job queue: ${err.message}`));
  await boss.start();
  await ensureQueues(boss, config);

  let held = false;
  const runOne = async (jobId: number) => {
    const claim = await claimJob(q, jobId, name);
    if (!claim) return;
    log(`job ${jobId}: attempt ${claim.attempt} (${claim.kind})${claim.previousLost ? ', after a lost attempt' : ''}`);
    if (config.jobs.holdMs > 0 && !held) {
      held = true;
      await new Promise((r) => setTimeout(r, config.jobs.holdMs));
    }

    let cancelled = false;
    const deadline = Date.now() + (budgetSeconds(claim.kind, claim.params) + config.jobs.graceSeconds / 2) * 1000;
    // A getter: HiGHS reads it from inside a synchronous solve, where only the clock can move.
    const signal = { get aborted() { return cancelled || Date.now() > deadline; } };
    let pending: JobProgress | null = null;
    let writing = Promise.resolve();
    const flush = () => {
      if (!pending) return;
      const p = pending;
      pending = null;
      writing = writing.then(() => writeProgress(q, jobId, claim.attempt, p)).catch((e) => log(`job ${jobId}: progress not written: ${(e as Error).message}`));
    };
    const timers = [
      setInterval(flush, PROGRESS_MS),
      setInterval(() => {
        void cancelRequested(q, jobId).then((c) => { cancelled ||= c; }, () => {});
      }, CANCEL_POLL_MS),
    ];
    try {
      const result = await runJob(planner, claim.kind, claim.params, claim.text, {
        signal,
        onProgress: (p) => { pending = { ...p, at: new Date().toISOString() }; },
      });
      flush();
      await writing;
      cancelled ||= await cancelRequested(q, jobId);
      const won = cancelled
        ? await finishAttempt(q, jobId, claim.attempt, { status: 'cancelled' })
        : await finishAttempt(q, jobId, claim.attempt, { status: 'done', result });
      log(`job ${jobId}: attempt ${claim.attempt} ${won ? (cancelled ? 'cancelled' : 'done') : 'discarded (a later attempt took over)'}`);
    } catch (err) {
      await writing;
      const e = err as Error;
      const message = cancelled
        ? null
        : err instanceof JobInputError
          ? `The design could not be planned: ${e.message}.`
          : Date.now() > deadline
            ? `The job ran past its time limit (${budgetSeconds(claim.kind, claim.params)} s) and was stopped.`
            : `The planner failed: ${e.message}`;
      if (message && !(err instanceof JobInputError)) log(`job ${jobId}: ${e.stack ?? e.message}`);
      await finishAttempt(q, jobId, claim.attempt, message ? { status: 'failed', error: message } : { status: 'cancelled' });
    } finally {
      for (const t of timers) clearInterval(t);
    }
  };

  const poll = { batchSize: 1, pollingIntervalSeconds: config.jobs.pollSeconds };
  // One job at a time per process. pg-boss stops waiting for a handler at the job's expiry and
  // may hand this process the next job while the engine still runs the last one: it waits here.
  let busy: Promise<void> = Promise.resolve();
  await boss.work<QueueMessage>(PLAN_QUEUE, poll, async ([job]) => {
    if (!job) return;
    const run = busy.then(() => runOne(job.data.jobId));
    busy = run.catch(() => {});
    await run;
  });
  await boss.work<QueueMessage>(LOST_QUEUE, poll, async ([job]) => {
    if (!job) return;
    const tries = config.jobs.retries + 1;
    await failLostJob(q, job.data.jobId,
      `The job was tried ${tries} time${tries === 1 ? '' : 's'} and each time its worker stopped answering (killed, crashed or cut off from the database); no result was kept. Start it again, perhaps with a shorter time limit.`);
    log(`job ${job.data.jobId}: failed, every attempt lost its worker`);
  });
  log(`worker ${name} takes jobs from ${config.jobs.queueSchema}.${PLAN_QUEUE}`);
  return {
    name,
    // Graceful: a job in hand may finish; past the timeout pg-boss fails it and the queue retries it.
    stop: () => boss.stop({ graceful: true, timeout: 30_000, wait: true, close: true }),
  };
}
