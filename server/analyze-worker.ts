// A worker thread of the analysis pool (server/analyzePool.ts): runs the engine on one design
// text, so a large design never holds up the request thread (health checks, other users).
import type { Rules } from '../shared/types';
import { checkDesignText } from './engine';

export interface AnalyzeTask {
  text: string;
  file: string;
  teamRules: Rules | null;
}

export default function analyzeTask(task: AnalyzeTask) {
  return checkDesignText(task.text, task.file, task.teamRules);
}
