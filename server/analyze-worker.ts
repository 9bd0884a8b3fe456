// A worker thread of the analysis pool (server/analyzePool.ts): runs the engine on one design
// text, so a large design never holds up the request thread (health checks, other users).
import type { AnalyzeResult } from '../shared/report/api';
import type { Rules } from '../shared/types';
import { checkDesignText } from './engine';
import { jsonText, type JsonText } from './http/present';
import { workerData } from 'node:worker_threads';
import { lowerThreadPriority } from './threadPriority';

// Once per thread, when the pool starts it: an analysis yields the CPU to requests and queries.
lowerThreadPriority((workerData as { nice?: number } | null)?.nice ?? 0);

export interface AnalyzeTask {
  text: string;
  file: string;
  teamRules: Rules | null;
}

/**
 * The answer as JSON text: a string crosses to the request thread as one copy, where the report's
 * objects (100,000 edges) would be cloned there and then serialised there again, holding up every
 * other request for that time.
 */
export default function analyzeTask(task: AnalyzeTask): JsonText<AnalyzeResult> {
  return jsonText<AnalyzeResult>(checkDesignText(task.text, task.file, task.teamRules));
}
