// The real Pleat server for the browser tests: the Express app of server/app.ts on a private
// schema of the test database (server/test/db.ts), listening on a free port of 127.0.0.1 and
// serving the built web app from dist/web, with the demo seeded by the server's own seed.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import type { AppContext } from '../../server/context';
import { createJobQueue } from '../../server/jobs/queue';
import { createMailer } from '../../server/mail/mailer';
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fakeSmtp';
import { createTestDb, TEST_DATABASE_URL, type TestDb } from '../../server/test/db';

export interface WebServer {
  url: string;
  ctx: AppContext;
  db: TestDb;
  smtp: FakeSmtp;
  logs: string[];
  close(): Promise<void>;
}

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));

export async function startWebServer(o: { seed?: boolean } = {}): Promise<WebServer> {
  const db = await createTestDb();
  const smtp = await startFakeSmtp();
  const server: Server = createServer();
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as AddressInfo).port;
  const config = loadConfig({
    PLEAT_ENV: 'test',
    PLEAT_DATABASE_URL: TEST_DATABASE_URL,
    PLEAT_QUEUE_SCHEMA: db.queueSchema,
    PLEAT_ROOT: ROOT,
    PLEAT_JWT_SECRET: 'browser-test-secret',
    PLEAT_BCRYPT_ROUNDS: '4',
    PLEAT_LOGIN_LIMIT: '1000',
    PLEAT_PORT: String(port),
    PLEAT_PUBLIC_URL: `http://127.0.0.1:${port}`,
    PLEAT_WEB_DIR: join(ROOT, 'dist', 'web'),
    PLEAT_SMTP_HOST: '127.0.0.1',
    PLEAT_SMTP_PORT: String(smtp.port),
    // The key of git-host tokens at rest (tests only).
    PLEAT_SECRET_KEY: 'ffeeddccbbaa99887766554433221100ffeeddccbbaa99887766554433221100',
    // The fake git host of the browser tests listens on http://127.0.0.1.
    PLEAT_HOST_HTTP_LOOPBACK: '1',
  });
  const logs: string[] = [];
  const log = (m: string) => logs.push(m);
  const mail = createMailer(config.smtp, log);
  const queue = createJobQueue(config, log);
  const ctx: AppContext = { config, db, mail, log, queue };
  server.on('request', createApp(ctx));
  if (o.seed !== false) {
    const { seedDemo } = await import('../../server/seed/seed');
    await seedDemo(ctx, log);
  }
  return {
    url: `http://127.0.0.1:${port}`,
    ctx,
    db,
    smtp,
    logs,
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await mail.settled();
      mail.close();
      await queue.close();
      await smtp.close();
      await db.drop();
    },
  };
}
