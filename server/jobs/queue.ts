// The PostgreSQL job queue (pg-boss). The API process only sends and cancels; worker processes
// (server/jobs/worker.ts) fetch, supervise (find jobs of lost workers) and retry. The queue
// carries nothing but our job id: what was asked and what came out live in our own tables
// (server/db/migrations/002-jobs.ts). See docs/server.md, section Jobs.
import PgBoss from 'pg-boss';
import type { Config } from '../config';

/** Plans and sweeps, one queue: each worker takes one job at a time from it. */
export const PLAN_QUEUE = 'pleat-plan';
/** Jobs whose every attempt lost its worker land here; a worker marks them failed with a message. */
export const LOST_QUEUE = 'pleat-plan-lost';

export interface QueueMessage {
  jobId: number;
}

export interface JobQueue {
  /** Started on first use, so a process that never touches jobs never connects pg-boss. */
  boss(): Promise<PgBoss>;
  send(jobId: number, expireInSeconds: number): Promise<string>;
  cancel(queueId: string): Promise<void>;
  close(): Promise<void>;
}

export function bossOptions(config: Config, role: 'api' | 'worker'): PgBoss.ConstructorOptions {
  return {
    connectionString: config.databaseUrl,
    schema: config.jobs.queueSchema,
    application_name: `pleat-${role}`,
    max: role === 'api' ? 2 : 3,
    // Only workers look for expired jobs; the API process has no timers of its own.
    supervise: role === 'worker',
    maintenanceIntervalSeconds: config.jobs.superviseSeconds,
    schedule: false,
    migrate: true,
  };
}

/** Creates both queues once; a second process finding them made already is fine. */
export async function ensureQueues(boss: PgBoss, config: Config): Promise<void> {
  for (const [name, options] of [
    [LOST_QUEUE, { retryLimit: 0 }],
    [PLAN_QUEUE, { retryLimit: config.jobs.retries, retryDelay: 0, deadLetter: LOST_QUEUE }],
  ] as const) {
    if (await boss.getQueue(name)) continue;
    try {
      await boss.createQueue(name, { name, ...options });
    } catch (err) {
      if (!(await boss.getQueue(name))) throw err; // lost a race with another process: fine
    }
  }
}

export function createJobQueue(config: Config, log: (msg: string) => void): JobQueue {
  let started: Promise<PgBoss> | null = null;
  const boss = () =>
    (started ??= (async () => {
      const b = new PgBoss(bossOptions(config, 'api'));
      b.on('error', (err) => log(`job queue: ${err.message}`));
      await b.start();
      await ensureQueues(b, config);
      return b;
    })().catch((err) => {
      started = null;
      throw err;
    }));
  return {
    boss,
    async send(jobId, expireInSeconds) {
      const id = await (await boss()).send(PLAN_QUEUE, { jobId } satisfies QueueMessage, { expireInSeconds });
      if (!id) throw new Error('the job queue refused the job');
      return id;
    },
    async cancel(queueId) {
      await (await boss()).cancel(PLAN_QUEUE, queueId);
    },
    async close() {
      if (!started) return;
      const b = await started.catch(() => null);
      started = null;
      await b?.stop({ graceful: false, wait: true, close: true });
    },
  };
}
