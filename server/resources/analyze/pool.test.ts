// POST /api/analyze runs the engine on worker threads, and analyses and uploads are limited per
// person and per CI token. The first test checks order, not time: health checks sent while a
// large design is being analysed are all answered before that analysis is.
import { readdirSync, readFileSync, readlinkSync } from 'node:fs';
import { request } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { generateDesign } from '../../../scripts/gen-design.mjs';
import type { Project, User } from '../../db/models';
import { cookieFor, makeCiToken, makeMember, makeProject, makeReport } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
let project: Project;

beforeAll(async () => {
  t = await startTestServer({ config: { analyze: { limit: 3, timeoutMs: 120_000 }, upload: { perMinute: 3, perDay: 100 } } });
  project = await makeProject(t.ctx);
});
afterAll(async () => t?.close());

function address(): string {
  const http = t.http() as unknown as { app: { address(): AddressInfo } };
  return `http://127.0.0.1:${http.app.address().port}`;
}

/** A multipart POST whose `sent` resolves once the whole body has left, and `done` with the answer. */
function postDesign(text: string, cookie: string) {
  const boundary = 'pleat-test-boundary';
  const body = Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="design"; filename="big.fold.yaml"\r\nContent-Type: application/yaml\r\n\r\n${text}\r\n--${boundary}--\r\n`);
  let sent!: () => void;
  const sentP = new Promise<void>((r) => (sent = r));
  const done = new Promise<{ status: number; body: string }>((resolve, reject) => {
    const req = request(`${address()}/api/analyze`, {
      method: 'POST',
      headers: { Cookie: cookie, 'Content-Type': `multipart/form-data; boundary=${boundary}`, 'Content-Length': body.length },
    }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode!, body: Buffer.concat(chunks).toString() }));
    });
    req.on('error', reject);
    req.end(body, () => sent());
  });
  return { sent: sentP, done };
}

describe('analysis off the request thread', () => {
  it('answers health checks while a 40,000-edge design is analysed', async () => {
    const engineer: User = await makeMember(t.ctx, project, 'engineer');
    const text = generateDesign({ edges: 40_000, seed: 3 }).text;
    const order: string[] = [];
    const big = postDesign(text, cookieFor(t.ctx, engineer));
    const answered = big.done.then((r) => { order.push('analysis'); return r; });
    await big.sent;
    // Give the server a moment to parse the form and hand the design on, then ask three times.
    await new Promise((r) => setTimeout(r, 300));
    for (let i = 0; i < 3; i++) {
      const h = await t.http().get('/api/health/live');
      expect(h.status).toBe(200);
      order.push('health');
    }
    const r = await answered;
    expect(r.status, r.body.slice(0, 300)).toBe(200);
    expect(JSON.parse(r.body).design.status).not.toBe('error');
    expect(order).toEqual(['health', 'health', 'health', 'analysis']);
  });

  // Linux only (setpriority(2): the nice value is per thread there); elsewhere analyses keep the process's priority.
  it.runIf(process.platform === 'linux')('runs analyses at the nice value of PLEAT_ANALYZE_NICE (10 unless set), and only the analysis threads', async () => {
    const engineer = await makeMember(t.ctx, project, 'engineer');
    const small = generateDesign({ edges: 60, seed: 2 }).text;
    const r = await t.http().post('/api/analyze').set('Cookie', cookieFor(t.ctx, engineer)).attach('design', Buffer.from(small), 'small.fold.yaml');
    expect(r.status).toBe(200);
    // The pool keeps its thread for a minute after a task: its nice value is read from /proc (field 19 of stat).
    const nice = (tid: string) => Number(readFileSync(`/proc/self/task/${tid}/stat`, 'utf8').split(') ')[1]!.split(' ')[16]);
    const values = readdirSync('/proc/self/task').map(nice);
    expect(t.ctx.config.analyzeNice).toBe(10);
    expect(values).toContain(10);
    expect(nice(readlinkSync('/proc/thread-self').split('/').pop()!)).toBe(0);
    expect(values.filter((v) => v === 10).length).toBeLessThan(values.length);
  });

  it('limits analyses per person with 429 and Retry-After; another person is not affected', async () => {
    const a = await makeMember(t.ctx, project, 'engineer');
    const b = await makeMember(t.ctx, project, 'engineer');
    const small = generateDesign({ edges: 60, seed: 1 }).text;
    const send = (u: User) => t.http().post('/api/analyze').set('Cookie', cookieFor(t.ctx, u)).attach('design', Buffer.from(small), 'small.fold.yaml');
    for (let i = 0; i < 3; i++) expect((await send(a)).status).toBe(200);
    const refused = await send(a);
    expect(refused.status).toBe(429);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThan(0);
    expect(refused.body.error.message).toMatch(/At most 3 analyses a minute per person/);
    expect((await send(b)).status).toBe(200);
  });
});

describe('upload limits per CI token', () => {
  it('429 with Retry-After past the per-minute limit; another token is not affected', async () => {
    const one = (await makeCiToken(t.ctx, project)).secret;
    const two = (await makeCiToken(t.ctx, project)).secret;
    const up = (secret: string) => t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport());
    for (let i = 0; i < 3; i++) expect((await up(one)).status).toBe(201);
    const refused = await up(one);
    expect(refused.status).toBe(429);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThan(0);
    expect(Number(refused.headers['retry-after'])).toBeLessThanOrEqual(60);
    expect((await up(two)).status).toBe(201);
  });

  it('429 once the daily quota is used', async () => {
    const q = await startTestServer({ config: { upload: { perMinute: 100, perDay: 2 } } });
    try {
      const p = await makeProject(q.ctx);
      const secret = (await makeCiToken(q.ctx, p)).secret;
      const up = () => q.http().post(`/api/projects/${p.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport());
      expect((await up()).status).toBe(201);
      expect((await up()).status).toBe(201);
      const refused = await up();
      expect(refused.status).toBe(429);
      expect(refused.body.error.message).toMatch(/quota of 2 uploads a day/);
      expect(Number(refused.headers['retry-after'])).toBeGreaterThan(3600);
    } finally {
      await q.close();
    }
  });
});
