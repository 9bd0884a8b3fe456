// What every route handler can reach: settings, the database, the mailer and a logger.
import type { Config } from './config';
import type { Db } from './db/index';
import type { AnalyzePool } from './analyzePool';
import type { OutageMonitor } from './http/outage';
import type { JobQueue } from './jobs/queue';
import type { Mailer } from './mail/mailer';

export interface AppContext {
  config: Config;
  db: Db;
  mail: Mailer;
  log: (msg: string) => void;
  /** The worker threads of POST /api/analyze; made on the first analysis, closed on shutdown. */
  analyzer?: AnalyzePool;
  /** Notices the database going away and coming back (server/http/outage.ts). */
  outage?: OutageMonitor;
  /** The plan and sweep job queue (started on first use). */
  queue: JobQueue;
}
