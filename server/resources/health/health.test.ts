// Health: up with its database, and saying so honestly when the database is gone.
import supertest from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../app';
import { connectDb } from '../../db/index';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
beforeAll(async () => { t = await startTestServer(); });
afterAll(async () => t?.close());

describe('GET /api/health', () => {
  it('answers ok with a reachable database', async () => {
    const res = await t.http().get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ ok: true, database: true });
  });

  it('answers 503 when the database cannot be reached, while the liveness route stays up', async () => {
    // Port 9 (discard) on loopback: nothing speaks PostgreSQL there.
    const db = connectDb({ url: 'postgres://pleat@127.0.0.1:9/nothing', pool: 1 });
    const app = createApp({ ...t.ctx, db });
    try {
      const res = await supertest(app).get('/api/health');
      expect(res.status).toBe(503);
      expect(res.body).toEqual({ ok: false, database: false });
      expect((await supertest(app).get('/api/health/live')).body).toEqual({ ok: true });
    } finally {
      await db.close();
    }
  });
});
