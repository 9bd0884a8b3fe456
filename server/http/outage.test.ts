// A database outage, without stopping the shared PostgreSQL: the server talks to it through a TCP
// proxy of the test's own, which then drops every connection and refuses new ones, and later lets
// them through again. Uploads during the outage get 503 with Retry-After (what the CLI retries),
// and the log gets one line when the outage begins and one when it ends.
import { createServer as createHttpServer } from 'node:http';
import { createServer, connect, type AddressInfo, type Socket } from 'node:net';
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../app';
import { createJobQueue } from '../jobs/queue';
import { loadConfig } from '../config';
import type { AppContext } from '../context';
import { connectDb, type Db } from '../db/index';
import { createMailer } from '../mail/mailer';
import { createTestDb, TEST_DATABASE_URL, type TestDb } from '../test/db';
import { makeCiToken, makeProject, makeReport } from '../test/factories';

let testDb: TestDb;
let db: Db;
let ctx: AppContext;
let http: ReturnType<typeof createHttpServer>;
const logs: string[] = [];
let down = false;
const sockets = new Set<Socket>();
const proxy = createServer((client) => {
  if (down) return void client.destroy();
  const target = new URL(TEST_DATABASE_URL);
  const upstream = connect(Number(target.port), target.hostname);
  sockets.add(client).add(upstream);
  const drop = () => { client.destroy(); upstream.destroy(); sockets.delete(client); sockets.delete(upstream); };
  client.on('error', drop).on('close', drop);
  upstream.on('error', drop).on('close', drop);
  client.pipe(upstream).pipe(client);
});

beforeAll(async () => {
  testDb = await createTestDb();
  await new Promise<void>((r) => proxy.listen(0, '127.0.0.1', r));
  const url = new URL(TEST_DATABASE_URL);
  url.port = String((proxy.address() as AddressInfo).port);
  db = connectDb({ url: url.toString(), schema: testDb.schema, pool: 4 });
  const config = loadConfig({ PLEAT_ENV: 'test', PLEAT_JWT_SECRET: 'x'.repeat(32), PLEAT_SMTP_HOST: 'none', PLEAT_UPLOAD_LIMIT: '100000' });
  const log = (m: string) => logs.push(m);
  ctx = { config, db, mail: createMailer(null, () => {}), log, queue: createJobQueue(config, log) };
  ctx.outage = (await import('./outage')).outageMonitor(db.sequelize, ctx.log, { probeMs: 100 });
  http = createHttpServer(createApp(ctx));
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', r));
});
afterAll(async () => {
  ctx?.outage?.stop();
  await ctx?.queue.close();
  http?.closeAllConnections();
  await new Promise((r) => http?.close(r));
  await db?.close();
  proxy.close();
  for (const s of sockets) s.destroy();
  await testDb?.drop();
});

describe('a database outage', () => {
  it('answers 503 with Retry-After during it, logs one line as it begins and one as it ends, and recovers without a restart', async () => {
    const project = await makeProject(ctx);
    const { secret } = await makeCiToken(ctx, project);
    const upload = () => supertest(http).post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport());
    expect((await upload()).status).toBe(201);

    down = true;
    for (const s of sockets) s.destroy();
    const during = await Promise.all(Array.from({ length: 40 }, upload));
    expect(during.map((r) => r.status)).toEqual(Array(40).fill(503));
    for (const r of during) {
      expect(r.headers['retry-after']).toBe('5');
      expect(r.body.error.code).toBe('database-unavailable');
    }
    expect(logs).toHaveLength(1);
    expect(logs[0]).toMatch(/^database unreachable \(.+\); answering 503 until it is back$/);
    expect(logs.join('\n')).not.toMatch(/\n\s+at /);

    down = false;
    // The probe finds the database again by itself (every 100 ms here); wait for its line.
    while (logs.length < 2) await new Promise((r) => setTimeout(r, 50));
    expect(logs[1]).toMatch(/^database reachable again after [\d.]+ s; \d+ requests answered 503 meanwhile$/);
    const after = await upload();
    expect(after.status).toBe(201);
    expect(logs).toHaveLength(2);
  });
});
