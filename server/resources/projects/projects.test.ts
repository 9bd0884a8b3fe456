// Projects: created by admins, seen by their members only.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cookieFor, makeMember, makeProject, makeUser } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { User } from '../../db/models';

let t: TestServer;
let admin: User;
beforeAll(async () => {
  t = await startTestServer();
  admin = await makeUser(t.ctx, { isAdmin: true });
});
afterAll(async () => t?.close());

describe('projects', () => {
  it('an admin creates a project with empty team rules; the slug is unique', async () => {
    const res = await t.http().post('/api/projects').set('Cookie', cookieFor(t.ctx, admin))
      .send({ slug: 'radio-channelizer', name: 'Radio channelizer', baseBranch: 'develop', regressionTolerance: 0.1 });
    expect(res.status).toBe(201);
    expect(res.body.project).toMatchObject({ slug: 'radio-channelizer', baseBranch: 'develop', regressionTolerance: 0.1 });
    const rules = await t.http().get('/api/projects/radio-channelizer/rules').set('Cookie', cookieFor(t.ctx, admin));
    expect(rules.body.rules).toEqual({});
    const dup = await t.http().post('/api/projects').set('Cookie', cookieFor(t.ctx, admin)).send({ slug: 'radio-channelizer', name: 'Again' });
    expect(dup.status).toBe(409);
    const bad = await t.http().post('/api/projects').set('Cookie', cookieFor(t.ctx, admin)).send({ slug: 'Not A Slug', name: 'x' });
    expect(bad.status).toBe(400);
  });

  it('lists only the caller\'s projects with the caller\'s role; an admin sees all', async () => {
    const a = await makeProject(t.ctx);
    const b = await makeProject(t.ctx);
    const person = await makeMember(t.ctx, a, 'viewer');
    const mine = await t.http().get('/api/projects').set('Cookie', cookieFor(t.ctx, person));
    expect(mine.body.projects.map((p: { slug: string; role: string }) => [p.slug, p.role])).toEqual([[a.slug, 'viewer']]);
    const all = await t.http().get('/api/projects').set('Cookie', cookieFor(t.ctx, admin));
    const slugs = all.body.projects.map((p: { slug: string }) => p.slug);
    expect(slugs).toEqual(expect.arrayContaining([a.slug, b.slug, 'radio-channelizer']));
    expect(all.body.projects.every((p: { role: string }) => p.role === 'admin')).toBe(true);
  });

  it('a lead changes the name and base branch; an engineer may not', async () => {
    const p = await makeProject(t.ctx);
    const lead = await makeMember(t.ctx, p, 'lead');
    const eng = await makeMember(t.ctx, p, 'engineer');
    const ok = await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ name: 'New name', baseBranch: 'trunk' });
    expect(ok.body.project).toMatchObject({ name: 'New name', baseBranch: 'trunk', role: 'lead' });
    expect((await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, eng)).send({ name: 'x' })).status).toBe(403);
    expect((await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ slug: 'x' })).status).toBe(400);
  });
});
