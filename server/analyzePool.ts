// The pool of worker threads that POST /api/analyze hands its designs to (piscina). From source
// (tests, tsx) the worker is the TypeScript file run through tsx's loader; from the bundle
// (dist/server/main.js) it is the bundled dist/server/analyze-worker.js beside it.
import { availableParallelism } from 'node:os';
import { fileURLToPath } from 'node:url';
import { Piscina } from 'piscina';
import type { AnalyzeResult } from '../shared/report/api';
import type { JsonText } from './http/present';
import type { AnalyzeTask } from './analyze-worker';

export interface AnalyzePool {
  /** The answer's JSON text, made in the worker thread. */
  run(task: AnalyzeTask, signal?: AbortSignal): Promise<JsonText<AnalyzeResult>>;
  /** Tasks waiting for a thread. */
  readonly queued: number;
  close(): Promise<void>;
}

export function createAnalyzePool(o: { threads?: number; maxQueue?: number; nice?: number } = {}): AnalyzePool {
  const fromSource = import.meta.url.endsWith('.ts');
  const filename = fileURLToPath(new URL(fromSource ? './analyze-worker.ts' : './analyze-worker.js', import.meta.url));
  const threads = o.threads ?? Math.max(1, availableParallelism() - 1);
  const pool = new Piscina({
    filename,
    minThreads: 0,
    maxThreads: threads,
    // A thread sits idle for a while before it goes (a thread start loads the engine again).
    idleTimeout: 60_000,
    maxQueue: o.maxQueue ?? threads * 8,
    execArgv: fromSource ? ['--import', 'tsx'] : [],
    // Read by each thread as it starts (server/threadPriority.ts).
    workerData: { nice: o.nice ?? 0 },
  });
  return {
    run: (task, signal) => pool.run(task, { signal }),
    get queued() {
      return pool.queueSize;
    },
    close: () => pool.destroy(),
  };
}
