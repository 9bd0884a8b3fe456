// A worker process (`server/main.ts worker`): takes plan and sweep jobs from the queue one at a
// time, runs the engine on them, writes progress and the result into the job's row. Any number
// of workers, on any machines, may share one database; the queue hands each job to one of them
// (pg-boss fetches with SELECT ... FOR UPDATE SKIP LOCKED). A worker that dies mid-job is noticed
// by the others' supervisor once the job's expiry passes; the job is then tried again, or, after
// the last try, marked failed with a message (docs/server.md, section Jobs).
import { hostname } from 'node:os';
import PgBoss from 'pg-boss';
import type { JobParams, JobProgress } from '../../shared/report/api';
import type { Config } from '../config';
import type { Db } from '../db/index';
import { bossOptions, ensureQueues, LOST_QUEUE, PLAN_QUEUE, type QueueMessage } from './queue';
import { JobInputError, runJob, type Planner } from './run';
import { cancelRequested, claimJob, failLostJob, finishAttempt, writeProgress } from './store';

/** The engine's own budget for a job: its time limit (a sweep shares it among its factors). */
export function budgetSeconds(_kind: 'plan' | 'sweep', params: JobParams): number {
  return params.timeLimitSeconds;
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
  const runOne = async (jobId: number): Promise<'done' | 'nothing' | 'superseded'> => {
    const claim = await claimJob(q, jobId, name);
    if (!claim) return 'nothing';
    log(`job ${jobId}: attempt ${claim.attempt} (${claim.kind})${claim.previousLost ? ', after a lost attempt' : ''}`);
    if (config.jobs.holdMs > 0 && !held) {
      held = true;
      await new Promise((r) => setTimeout(r, config.jobs.holdMs));
    }

    // A cancel that came while the job waited for this worker is honoured before any work.
    let cancelled = await cancelRequested(q, jobId);
    if (cancelled) {
      const won = await finishAttempt(q, jobId, claim.attempt, { status: 'cancelled' });
      return won ? 'done' : 'superseded';
    }
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
      return won ? 'done' : 'superseded';
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
      const won = await finishAttempt(q, jobId, claim.attempt, message ? { status: 'failed', error: message } : { status: 'cancelled' });
      return won ? 'done' : 'superseded';
    } finally {
      for (const t of timers) clearInterval(t);
    }
  };

  // Our own fetch loop, one job at a time: pg-boss's work() stops waiting for a handler at the
  // job's expiry and fetches the next while the engine still runs; here a busy worker takes
  // nothing new, and one whose attempt was superseded leaves the queue's record alone.
  let stopping = false;
  let wake: (() => void) | null = null;
  const nap = () => new Promise<void>((resolve) => {
    const timer = setTimeout(resolve, config.jobs.pollSeconds * 1000);
    wake = () => { clearTimeout(timer); resolve(); };
  });
  const loop = (async () => {
    while (!stopping) {
      let job: PgBoss.Job<QueueMessage> | undefined;
      try {
        [job] = await boss.fetch<QueueMessage>(PLAN_QUEUE, { batchSize: 1 });
      } catch (err) {
        log(`job queue: fetch failed: ${(err as Error).message}`);
      }
      if (!job) {
        await nap();
        continue;
      }
      try {
        const outcome = await runOne(job.data.jobId);
        if (outcome !== 'superseded') await boss.complete(PLAN_QUEUE, job.id);
      } catch (err) {
        // Our tables could not be written (the database went away): let the queue try again.
        log(`job ${job.data.jobId}: ${(err as Error).message}`);
        await boss.fail(PLAN_QUEUE, job.id, { message: (err as Error).message }).catch(() => {});
      }
    }
  })();
  await boss.work<QueueMessage>(LOST_QUEUE, { batchSize: 1, pollingIntervalSeconds: config.jobs.pollSeconds }, async ([job]) => {
    if (!job) return;
    const tries = config.jobs.retries + 1;
    await failLostJob(q, job.data.jobId,
      `The job was tried ${tries} time${tries === 1 ? '' : 's'} and each time its worker stopped answering (killed, crashed or cut off from the database); no result was kept. Start it again, perhaps with a shorter time limit.`);
    log(`job ${job.data.jobId}: failed, every attempt lost its worker`);
  });
  log(`worker ${name} takes jobs from ${config.jobs.queueSchema}.${PLAN_QUEUE}`);
  return {
    name,
    // A job in hand may finish (up to 30 s); one that does not is left to expire and be retried.
    async stop() {
      stopping = true;
      (wake as (() => void) | null)?.();
      await Promise.race([loop, new Promise((r) => setTimeout(r, 30_000).unref())]);
      await boss.stop({ graceful: false, wait: true, close: true });
    },
  };
}
