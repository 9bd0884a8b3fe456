// The real server (Express app on a private PostgreSQL schema, as the server's own tests run it)
// listening on a random loopback port, and the BUILT `pleat` run as a process against it.
// A gate in front of the app can answer 503 to the next uploads, to watch the CLI retry.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { randomBytes } from 'node:crypto';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import type { AppContext } from '../../server/context';
import type { Project } from '../../server/db/models';
import { createJobQueue } from '../../server/jobs/queue';
import { createMailer } from '../../server/mail/mailer';
import { createTestDb, TEST_DATABASE_URL, type TestDb } from '../../server/test/db';
import { makeCiToken, makeProject } from '../../server/test/factories';
import type { Rules } from '../../shared/types';
import { pleat, type RunResult } from '../cli/helpers';

export { ensureBuilt, tempDir, cleanupTemps, write, passingDesign, failingDesign, invalidDesign } from '../cli/helpers';

export interface LiveServer {
  ctx: AppContext;
  db: TestDb;
  url: string;
  /** Answer 503 to this many of the next run uploads before letting them through. */
  failNextUploads(n: number): void;
  /** Requests that reached the server, by "METHOD path" (gate refusals included). */
  requests: string[];
  close(): Promise<void>;
}

export async function startLiveServer(): Promise<LiveServer> {
  const db = await createTestDb();
  const config = loadConfig({
    PLEAT_ENV: 'test',
    PLEAT_DATABASE_URL: TEST_DATABASE_URL,
    PLEAT_QUEUE_SCHEMA: db.queueSchema,
    PLEAT_JWT_SECRET: 'test-secret-not-used-anywhere-else',
    PLEAT_BCRYPT_ROUNDS: '4',
    PLEAT_PUBLIC_URL: 'http://pleat.test',
    PLEAT_SMTP_HOST: 'none',
  });
  const logs: string[] = [];
  const mail = createMailer(config.smtp, (m) => logs.push(m));
  const log = (m: string) => logs.push(m);
  const queue = createJobQueue(config, log);
  const ctx: AppContext = { config, db, mail, log, queue };
  const app = createApp(ctx);
  let failing = 0;
  const requests: string[] = [];
  const server: Server = createServer((req, res) => {
    requests.push(`${req.method} ${req.url}`);
    if (failing > 0 && req.method === 'POST' && /\/runs$/.test(req.url ?? '')) {
      failing--;
      req.resume();
      res.writeHead(503, { 'Content-Type': 'application/json' });
      res.end(JSON.stringify({ error: { code: 'unavailable', message: 'The server is restarting.' } }));
      return;
    }
    app(req, res);
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  return {
    ctx,
    db,
    url,
    requests,
    failNextUploads: (n) => {
      failing = n;
    },
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await mail.settled();
      mail.close();
      await queue.close();
      await db.drop();
    },
  };
}

/** A project with a CI token, and optionally team rules set as a lead would. */
export async function projectWithToken(ctx: AppContext, rules: Rules = {}): Promise<{ project: Project; token: string }> {
  const project = await makeProject(ctx);
  if (Object.keys(rules).length > 0) await ctx.db.models.TeamRules.update({ rules }, { where: { projectId: project.id } });
  const { secret } = await makeCiToken(ctx, project);
  return { project, token: secret };
}

export const randomCommit = () => randomBytes(20).toString('hex');

/** A loopback port nothing listens on: opened, then closed again. */
export async function closedPortUrl(): Promise<string> {
  const s = createServer();
  await new Promise<void>((resolve) => s.listen(0, '127.0.0.1', resolve));
  const port = (s.address() as AddressInfo).port;
  await new Promise<void>((resolve) => s.close(() => resolve()));
  return `http://127.0.0.1:${port}`;
}

/**
 * Variables of CI systems and of pleat that the machine running the tests may have set; they
 * are cleared so that only what a test gives reaches the CLI.
 */
const INHERITED = /^(PLEAT_|GITHUB_|GITLAB_|CI_|CIRCLE|TRAVIS|JENKINS_|BUILDKITE|BITBUCKET_|TF_BUILD|SYSTEM_|BUILD_SOURCE|CHANGE_|GIT_(BRANCH|COMMIT|LOCAL_BRANCH)$|BRANCH_NAME$)/;

/** Runs the built CLI with only the given pleat/CI variables; fast retries unless a test says otherwise. */
export function run(args: string[], cwd: string, env: Record<string, string | undefined> = {}): Promise<RunResult> {
  const cleared: Record<string, undefined> = {};
  for (const k of Object.keys(process.env)) if (INHERITED.test(k)) cleared[k] = undefined;
  return pleat(args, { cwd, env: { ...cleared, PLEAT_UPLOAD_BACKOFF_MS: '20', ...env } });
}

/** Rows of `runs` for a commit, as the server stored them. */
export async function runsOf(db: TestDb, commit: string): Promise<{ id: number; branch: string; base_branch: string | null; base_commit: string | null; verdict: string; report: { rules: Record<string, { value: unknown; source: string }> } }[]> {
  const [rows] = await db.sequelize.query('SELECT id, branch, base_branch, base_commit, verdict, report FROM runs WHERE commit = $1 ORDER BY id', { bind: [commit] });
  return rows as never;
}
