// The history page and the CI upload check their caller in the same query as the project
// (server/http/access.ts). Every refusal must take effect at the very next request, as on the
// other routes: a signed-out or deactivated session, a revoked token, a removed member, a changed
// role. Common practice for session and token revocation, no further source.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project, User } from '../../db/models';
import { SESSION_COOKIE } from '../../http/auth';
import { cookieFor, makeCiToken, makeMember, makeProject, makeReport, makeUser, randomCommit } from '../../test/factories';
import { ingestRun } from './ingest';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
let project: Project;
let lead: User;
beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  lead = await makeMember(t.ctx, project, 'lead');
});
afterAll(async () => t?.close());

const history = (cookie: string) => t.http().get(`/api/projects/${project.slug}/branches/main/runs`).set('Cookie', cookie);
const upload = (secret: string, slug = project.slug) =>
  t.http().post(`/api/projects/${slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport());

describe('history page: the session is checked with the project', () => {
  it('answers a member; refuses the session at once after logout, while another session goes on', async () => {
    const viewer = await makeMember(t.ctx, project, 'viewer');
    const first = cookieFor(t.ctx, viewer);
    const second = cookieFor(t.ctx, viewer);
    expect((await history(first)).status).toBe(200);
    expect((await t.http().post('/api/auth/logout').set('Cookie', first)).status).toBe(204);
    const refused = await history(first);
    expect(refused.status).toBe(401);
    expect(refused.body.error.code).toBe('invalid-credentials');
    expect((await history(second)).status).toBe(200);
  });

  it('refuses every session of an account at once when it is deactivated', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const viewer = await makeMember(t.ctx, project, 'viewer');
    const cookie = cookieFor(t.ctx, viewer);
    expect((await history(cookie)).status).toBe(200);
    const off = await t.http().patch(`/api/users/${viewer.id}`).set('Cookie', cookieFor(t.ctx, admin)).send({ active: false });
    expect(off.status).toBe(200);
    expect((await history(cookie)).status).toBe(401);
  });

  it('a removed member gets 404 at the next request; a changed role applies at the next request', async () => {
    const engineer = await makeMember(t.ctx, project, 'engineer');
    const cookie = cookieFor(t.ctx, engineer);
    const asLead = cookieFor(t.ctx, lead);
    const putRules = () => t.http().put(`/api/projects/${project.slug}/rules`).set('Cookie', cookie).send({ rules: {} });
    expect((await putRules()).status).toBe(403);
    expect((await t.http().patch(`/api/projects/${project.slug}/members/${engineer.id}`).set('Cookie', asLead).send({ role: 'lead' })).status).toBe(200);
    expect((await putRules()).status).toBe(200);
    expect((await t.http().patch(`/api/projects/${project.slug}/members/${engineer.id}`).set('Cookie', asLead).send({ role: 'viewer' })).status).toBe(200);
    expect((await putRules()).status).toBe(403);
    expect((await history(cookie)).status).toBe(200);
    expect((await t.http().delete(`/api/projects/${project.slug}/members/${engineer.id}`).set('Cookie', asLead)).status).toBe(204);
    expect((await history(cookie)).status).toBe(404);
  });

  it('gives the page read in the same query to a member and to an admin who is not one, cursor included', async () => {
    const p = await makeProject(t.ctx);
    for (let i = 0; i < 3; i++) await ingestRun(t.ctx, p, makeReport({ branch: 'main', commit: randomCommit() }));
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const viewer = await makeMember(t.ctx, p, 'viewer');
    const read = (u: User, q = '') => t.http().get(`/api/projects/${p.slug}/branches/main/runs?limit=2${q}`).set('Cookie', cookieFor(t.ctx, u));
    for (const who of [admin, viewer]) {
      const first = await read(who);
      expect(first.status).toBe(200);
      expect(first.body.runs).toHaveLength(2);
      expect(first.body.runs[0].designs.length).toBeGreaterThan(0);
      const second = await read(who, `&cursor=${encodeURIComponent(first.body.nextCursor)}`);
      expect(second.body.runs).toHaveLength(1);
      expect(second.body.nextCursor).toBeNull();
    }
    // An empty branch is an empty page, not a refusal.
    const none = await t.http().get(`/api/projects/${p.slug}/branches/nothing-here/runs`).set('Cookie', cookieFor(t.ctx, viewer));
    expect(none.status).toBe(200);
    expect(none.body).toEqual({ runs: [], nextCursor: null });
  });

  it('anonymous, a forged cookie and a CI token are refused as on every route', async () => {
    expect((await t.http().get(`/api/projects/${project.slug}/branches/main/runs`)).status).toBe(401);
    const forged = await history(`${SESSION_COOKIE}=not.a.token`);
    expect(forged.status).toBe(401);
    expect(forged.body.error.code).toBe('invalid-credentials');
    const { secret } = await makeCiToken(t.ctx, project);
    expect((await t.http().get(`/api/projects/${project.slug}/branches/main/runs`).set('Authorization', `Bearer ${secret}`)).status).toBe(403);
  });
});

describe('upload: the token is checked with the project', () => {
  it('a revoked token is refused at the next upload', async () => {
    const token = await makeCiToken(t.ctx, project);
    expect((await upload(token.secret)).status).toBe(201);
    const revoked = await t.http().delete(`/api/projects/${project.slug}/tokens/${token.id}`).set('Cookie', cookieFor(t.ctx, lead));
    expect(revoked.status).toBe(200);
    const refused = await upload(token.secret);
    expect(refused.status).toBe(401);
    expect(refused.body.error.code).toBe('invalid-credentials');
  });

  it('another project\'s token gets 403 wrong-project, an unknown one 401, a person 403 token-required', async () => {
    const other = await makeProject(t.ctx);
    const { secret } = await makeCiToken(t.ctx, other);
    const wrong = await upload(secret);
    expect(wrong.status).toBe(403);
    expect(wrong.body.error.code).toBe('wrong-project');
    // An unknown slug with a valid token is 403 too (docs/server.md), never 404.
    expect((await upload(secret, 'no-such-project')).status).toBe(403);
    expect((await upload(`pleat_ci_${'x'.repeat(43)}`)).status).toBe(401);
    expect((await upload('not-a-ci-token')).status).toBe(401);
    const person = await t.http().post(`/api/projects/${project.slug}/runs`).set('Cookie', cookieFor(t.ctx, lead)).send(makeReport());
    expect(person.status).toBe(403);
    expect(person.body.error.code).toBe('token-required');
  });
});
