// The branch list: latest verdict, a trend of bounded length, and the caller's watch flag.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cookieFor, designEntry, makeMember, makeProject, makeReport } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import { ingestRun } from '../runs/ingest';
import { TREND_LENGTH } from './routes';

let t: TestServer;
beforeAll(async () => { t = await startTestServer(); });
afterAll(async () => t?.close());

describe('GET /api/projects/:slug/branches', () => {
  it('keeps the newest runs in the trend, oldest first, and marks watched branches', async () => {
    const p = await makeProject(t.ctx);
    const eng = await makeMember(t.ctx, p, 'engineer');
    const start = Date.parse('2024-05-01T00:00:00Z');
    const n = TREND_LENGTH + 3;
    for (let i = 0; i < n; i++) {
      await ingestRun(t.ctx, p, makeReport({ branch: 'dev', designs: [designEntry('fir', { registers: i })] }), { createdAt: new Date(start + i * 1000) });
    }
    await ingestRun(t.ctx, p, makeReport({ branch: 'main', designs: [designEntry('fir', { status: 'fail' })] }), { createdAt: new Date(start) });
    await t.ctx.db.models.Watch.create({ projectId: p.id, userId: eng.id, branch: 'dev' });
    const res = await t.http().get(`/api/projects/${p.slug}/branches`).set('Cookie', cookieFor(t.ctx, eng));
    expect(res.status).toBe(200);
    expect(res.body.branches.map((b: { name: string; watching: boolean }) => [b.name, b.watching])).toEqual([['main', false], ['dev', true]]);
    const dev = res.body.branches[1];
    expect(dev.trend.map((x: { registerMinimum: number }) => x.registerMinimum)).toEqual(Array.from({ length: TREND_LENGTH }, (_, i) => i + 3));
    expect(dev.latest.id).toBe(dev.trend[TREND_LENGTH - 1].runId);
    expect(res.body.branches[0].latest.verdict).toBe('fail');
  });
});
