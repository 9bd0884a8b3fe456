// Worker processes for the job tests: `server/main.ts worker` run by node (tsx as a loader, so
// the PID is the worker's own and SIGKILL hits it), on the test file's private schemas.
import { spawn, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import type { Config } from '../config';
import { TEST_DATABASE_URL, type TestDb } from './db';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));

/** Fast queue settings for tests: the queue notices a lost worker a few seconds after a job's budget. */
export const TEST_JOB_SETTINGS: Config['jobs'] = {
  queueSchema: '', graceSeconds: 8, superviseSeconds: 1, pollSeconds: 0.5, retries: 1, holdMs: 0,
};

export interface WorkerProcess {
  pid: number;
  /** The name the worker records on its attempts (host:pid). */
  name: string;
  output: () => string;
  kill(signal?: NodeJS.Signals): Promise<void>;
}

export async function startWorkerProcess(db: TestDb, o: { holdMs?: number } = {}): Promise<WorkerProcess> {
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts', 'worker'], {
    cwd: ROOT,
    env: {
      ...process.env,
      PLEAT_ENV: 'test',
      PLEAT_ROOT: ROOT,
      PLEAT_DATABASE_URL: TEST_DATABASE_URL,
      PLEAT_DB_SCHEMA: db.schema,
      PLEAT_QUEUE_SCHEMA: db.queueSchema,
      PLEAT_DB_POOL: '3',
      PLEAT_JWT_SECRET: 'worker-test-secret',
      PLEAT_MIGRATE: '0',
      PLEAT_JOB_GRACE_S: String(TEST_JOB_SETTINGS.graceSeconds),
      PLEAT_QUEUE_SUPERVISE_S: String(TEST_JOB_SETTINGS.superviseSeconds),
      PLEAT_QUEUE_POLL_S: String(TEST_JOB_SETTINGS.pollSeconds),
      PLEAT_JOB_RETRIES: String(TEST_JOB_SETTINGS.retries),
      PLEAT_TEST_JOB_HOLD_MS: String(o.holdMs ?? 0),
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let out = '';
  child.stdout!.on('data', (b) => (out += b));
  child.stderr!.on('data', (b) => (out += b));
  const exited = new Promise<void>((resolve) => child.once('exit', () => resolve()));
  await new Promise<void>((resolve, reject) => {
    const check = () => {
      if (/takes jobs from/.test(out)) return resolve();
      if (child.exitCode !== null) return reject(new Error(`the worker exited (${child.exitCode}):\n${out}`));
      setTimeout(check, 100);
    };
    check();
  });
  const name = /worker (\S+) takes jobs/.exec(out)![1]!;
  return {
    pid: child.pid!,
    name,
    output: () => out,
    async kill(signal = 'SIGKILL') {
      if (child.exitCode === null && child.signalCode === null) child.kill(signal);
      await exited;
    },
  };
}
