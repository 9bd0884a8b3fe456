// The server as tests use it: the real Express app on a private schema, driven through supertest,
// with an optional fake SMTP server on a random port that keeps the mail it receives.
import { createServer } from 'node:http';
import supertest from 'supertest';
import type { Express } from 'express';
import { createApp } from '../app';
import { loadConfig, type Config } from '../config';
import type { AppContext } from '../context';
import { startFakeSmtp, type FakeSmtp } from '../mail/fakeSmtp';
import { createJobQueue } from '../jobs/queue';
import { createMailer } from '../mail/mailer';
import { createTestDb, TEST_DATABASE_URL, type TestDb } from './db';

export interface TestServer {
  ctx: AppContext;
  app: Express;
  db: TestDb;
  smtp: FakeSmtp | null;
  /** What the server logged (mail failures, 500s). */
  logs: string[];
  http: () => supertest.Agent;
  close(): Promise<void>;
}

export async function startTestServer(opts: { mail?: boolean; config?: Partial<Config> } = {}): Promise<TestServer> {
  const db = await createTestDb();
  const smtp = opts.mail ? await startFakeSmtp() : null;
  const config = loadConfig({
    PLEAT_ENV: 'test',
    PLEAT_DATABASE_URL: TEST_DATABASE_URL,
    PLEAT_QUEUE_SCHEMA: db.queueSchema,
    PLEAT_JWT_SECRET: 'test-secret-not-used-anywhere-else',
    PLEAT_BCRYPT_ROUNDS: '4',
    PLEAT_LOGIN_LIMIT: '1000',
    PLEAT_UPLOAD_LIMIT: '100000',
    PLEAT_ANALYZE_LIMIT: '1000',
    PLEAT_PUBLIC_URL: 'http://pleat.test',
    // The key of host tokens at rest (tests only; 32 bytes as hex).
    PLEAT_SECRET_KEY: '00112233445566778899aabbccddeeff00112233445566778899aabbccddeeff',
    PLEAT_HOST_TIMEOUT_S: '5',
    // The fake git host (server/test/fakeGitHost.ts) listens on http://127.0.0.1.
    PLEAT_HOST_HTTP_LOOPBACK: '1',
    ...(smtp ? { PLEAT_SMTP_HOST: '127.0.0.1', PLEAT_SMTP_PORT: String(smtp.port) } : { PLEAT_SMTP_HOST: 'none' }),
  }, opts.config);
  const logs: string[] = [];
  const mail = createMailer(config.smtp, (m) => logs.push(m));
  const log = (m: string) => logs.push(m);
  const queue = createJobQueue(config, log);
  const ctx: AppContext = { config, db, mail, log, queue };
  const app = createApp(ctx);
  // One listening server for the whole file: supertest would otherwise start one per request.
  const server = createServer(app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  return {
    ctx, app, db, smtp, logs,
    http: () => supertest.agent(server),
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await mail.settled();
      mail.close();
      await ctx.analyzer?.close();
      await queue.close();
      await smtp?.close();
      await db.drop();
    },
  };
}
