// The per-person limit on active jobs (docs/server.md, Jobs), against the real PostgreSQL. No
// worker runs in this file, so started jobs stay queued until they are cancelled.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project, User } from '../../db/models';
import { addMember, cookieFor, makeMember, makeProject } from '../../test/factories';
import { startJobTestServer, UNPLACED } from '../../test/jobs';
import type { TestServer } from '../../test/server';
import { MAX_ACTIVE_JOBS_PER_PERSON } from './policy';

let t: TestServer;
let project: Project;
let engineer: User;

beforeAll(async () => {
  ({ t, project, engineer } = await startJobTestServer());
}, 60_000);
afterAll(async () => t?.close());

const start = (u: User, p: Project = project) =>
  t.http().post(`/api/projects/${p.slug}/jobs`).set('Cookie', cookieFor(t.ctx, u)).send({ kind: 'plan', design: { text: UNPLACED } });

describe('jobs a person may have queued or running at once', () => {
  it('refuses the next start with 429 and a message, counts over all projects, and frees a place when a job ends', async () => {
    const ids: number[] = [];
    const other = await makeProject(t.ctx);
    await addMember(t.ctx, other, engineer, 'engineer');
    for (let i = 0; i < MAX_ACTIVE_JOBS_PER_PERSON; i++) {
      const res = await start(engineer, i % 2 ? other : project);
      expect(res.status, res.text).toBe(201);
      ids.push(res.body.job.id);
    }
    const refused = await start(engineer, other);
    // RFC 6585 (open standard): 429 Too Many Requests
    expect(refused.status).toBe(429);
    expect(refused.body.error.code).toBe('too-many-jobs');
    expect(refused.body.error.message).toContain(`${MAX_ACTIVE_JOBS_PER_PERSON} plans or sweeps queued or running`);
    // someone else in the same project is not held back
    const colleague = await makeMember(t.ctx, project, 'engineer');
    expect((await start(colleague)).status).toBe(201);
    // a cancelled job no longer counts
    const cancel = await t.http().post(`/api/jobs/${ids[0]}/cancel`).set('Cookie', cookieFor(t.ctx, engineer)).send({});
    expect(cancel.status, cancel.text).toBe(200);
    expect((await start(engineer)).status).toBe(201);
    expect((await start(engineer)).status).toBe(429);
  });

  it('lets only the limit through when starts arrive at once', async () => {
    const eager = await makeMember(t.ctx, project, 'engineer');
    const all = await Promise.all(Array.from({ length: MAX_ACTIVE_JOBS_PER_PERSON + 3 }, () => start(eager)));
    expect(all.filter((r) => r.status === 201)).toHaveLength(MAX_ACTIVE_JOBS_PER_PERSON);
    expect(all.filter((r) => r.status === 429)).toHaveLength(3);
  });
});
