// The upload's burst limit and daily quota (pgLimits, server/http/limits.ts), counted in
// PostgreSQL per CI token by one statement: the upload after the limit gets 429 with Retry-After
// (RFC 6585 section 4 and RFC 9110 section 10.2.3, open standards), a refused token counts
// nothing, and each token has its own counters.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeCiToken, makeProject, makeReport, randomCommit } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
beforeAll(async () => {
  t = await startTestServer({ config: { upload: { perMinute: 2, perDay: 3 } } });
});
afterAll(async () => t?.close());

describe('upload limits', () => {
  it('refuses the upload past the minute limit with 429 and Retry-After; another token has its own', async () => {
    const project = await makeProject(t.ctx);
    const a = await makeCiToken(t.ctx, project);
    const b = await makeCiToken(t.ctx, project);
    const upload = (secret: string) => t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport({ commit: randomCommit() }));
    // A token that is not valid is refused before anything is counted.
    expect((await upload('pleat_ci_not-a-token')).status).toBe(401);
    expect((await upload(a.secret)).status).toBe(201);
    expect((await upload(a.secret)).status).toBe(201);
    const refused = await upload(a.secret);
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe('rate-limited');
    expect(refused.body.error.message).toMatch(/^At most 2 uploads a minute per CI token\. Try again in \d+ s\.$/);
    expect(Number(refused.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(Number(refused.headers['retry-after'])).toBeLessThanOrEqual(60);
    expect((await upload(b.secret)).status).toBe(201);
    // Refused by the minute limit, the third upload of token a did not count against its day.
    const rows = await t.ctx.db.sequelize.query<{ hits: number }>(
      `SELECT hits FROM rate_limits WHERE key = $1`, { bind: [`upload-day:${a.id}`], type: QueryTypes.SELECT },
    );
    expect(rows.map((r) => r.hits)).toEqual([2]);
  });
});
