// The set-up the job tests share: a test server whose queue lives in the test file's own schema
// (server/test/db.ts), with fast queue settings, a project and an engineer, and the example
// design with its folding sets taken out (the planner places every operation).
import { readFileSync } from 'node:fs';
import type { Project, User } from '../db/models';
import { makeMember, makeProject } from './factories';
import { startTestServer, type TestServer } from './server';
import { TEST_JOB_SETTINGS } from './workers';

/** examples/sensor-frontend.fold.yaml as written. */
export const EXAMPLE = readFileSync(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url), 'utf8');
/** examples/sensor-frontend.fold.yaml without its folding sets. */
export const UNPLACED = EXAMPLE.replace(/\n {2}sets:\n( {4}.*\n?)+/, '\n');

export interface JobTestServer {
  t: TestServer;
  project: Project;
  engineer: User;
}

export async function startJobTestServer(): Promise<JobTestServer> {
  const t = await startTestServer({ config: { jobs: { ...TEST_JOB_SETTINGS, queueSchema: '' } } });
  t.ctx.config.jobs.queueSchema = t.db.queueSchema;
  const project = await makeProject(t.ctx);
  const engineer = await makeMember(t.ctx, project, 'engineer');
  return { t, project, engineer };
}
