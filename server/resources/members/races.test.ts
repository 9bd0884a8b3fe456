// Membership invariants under concurrent requests. The requests are fired at once over separate
// connections, several times each; the invariant must hold after every trial (a read-then-write
// check passes when the requests happen to run one after the other and fails when they overlap).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project } from '../../db/models';
import { cookieFor, makeInvitation, makeMember, makeProject, makeUser } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
const TRIALS = 6;

beforeAll(async () => {
  t = await startTestServer();
});
afterAll(async () => t?.close());

const leadsOf = (p: Project) => t.ctx.db.models.Membership.count({ where: { projectId: p.id, role: 'lead' } });

describe('a project keeps a lead', () => {
  it('when two leads demote each other at once', async () => {
    for (let i = 0; i < TRIALS; i++) {
      const p = await makeProject(t.ctx);
      const a = await makeMember(t.ctx, p, 'lead');
      const b = await makeMember(t.ctx, p, 'lead');
      const res = await Promise.all([
        t.http().patch(`/api/projects/${p.slug}/members/${b.id}`).set('Cookie', cookieFor(t.ctx, a)).send({ role: 'viewer' }),
        t.http().patch(`/api/projects/${p.slug}/members/${a.id}`).set('Cookie', cookieFor(t.ctx, b)).send({ role: 'engineer' }),
      ]);
      // One demotion goes through. The other is refused: 409 (the last lead) when both requests
      // had read their caller's role before either wrote, 403 when the second one read it after
      // the first had demoted its caller. Which of the two depends on timing; the lead never does.
      const [first, second] = res.map((r) => r.status).sort();
      expect(first).toBe(200);
      expect([403, 409]).toContain(second);
      expect(await leadsOf(p)).toBe(1);
    }
  });

  it('when an admin removes one lead and demotes the other at once', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    for (let i = 0; i < TRIALS; i++) {
      const p = await makeProject(t.ctx);
      const a = await makeMember(t.ctx, p, 'lead');
      const b = await makeMember(t.ctx, p, 'lead');
      const res = await Promise.all([
        t.http().delete(`/api/projects/${p.slug}/members/${a.id}`).set('Cookie', cookieFor(t.ctx, admin)),
        t.http().patch(`/api/projects/${p.slug}/members/${b.id}`).set('Cookie', cookieFor(t.ctx, admin)).send({ role: 'viewer' }),
      ]);
      expect(res.filter((r) => r.status === 409)).toHaveLength(1);
      expect(await leadsOf(p)).toBe(1);
    }
  });

  it('when the last lead accepts an old invitation with a lower role', async () => {
    const p = await makeProject(t.ctx);
    const person = await makeUser(t.ctx);
    // Invited as viewer long ago; made lead since; the link still works.
    const { secret } = await makeInvitation(t.ctx, p, { email: person.email, role: 'viewer' });
    await t.ctx.db.models.Membership.create({ projectId: p.id, userId: person.id, role: 'lead' });
    const res = await t.http().post(`/api/invitations/${secret}/accept`).send({});
    expect(res.status).toBe(200);
    expect(res.body.role).toBe('lead');
    expect(await leadsOf(p)).toBe(1);
  });

  it('an invitation still raises a lower role', async () => {
    const p = await makeProject(t.ctx);
    const person = await makeMember(t.ctx, p, 'viewer');
    const { secret } = await makeInvitation(t.ctx, p, { email: person.email, role: 'engineer' });
    const res = await t.http().post(`/api/invitations/${secret}/accept`).send({});
    expect(res.body.role).toBe('engineer');
  });
});

describe('two invitations for one new address, accepted at once', () => {
  it('make one account with both memberships, no 500 and no secret in the log', async () => {
    for (let i = 0; i < TRIALS; i++) {
      const email = `twice-${i}-${process.pid}@example.test`;
      const p1 = await makeProject(t.ctx);
      const p2 = await makeProject(t.ctx);
      const inv1 = await makeInvitation(t.ctx, p1, { email, role: 'engineer' });
      const inv2 = await makeInvitation(t.ctx, p2, { email, role: 'viewer' });
      const res = await Promise.all([inv1, inv2].map((inv) =>
        t.http().post(`/api/invitations/${inv.secret}/accept`).send({ name: 'Twice', password: 'a sound passphrase' })));
      expect(res.map((r) => r.status)).toEqual([200, 200]);
      // One of them made the account and signed in; the other only added its membership.
      expect(res.map((r) => r.body.signedIn).sort()).toEqual([false, true]);
      const users = await t.ctx.db.models.User.findAll({ where: { email } });
      expect(users).toHaveLength(1);
      const roles = await t.ctx.db.models.Membership.findAll({ where: { userId: users[0]!.id }, order: [['projectId', 'ASC']] });
      expect(roles.map((m) => m.role)).toEqual(['engineer', 'viewer']);
      for (const inv of [inv1, inv2]) expect(t.logs.join('\n')).not.toContain(inv.secret);
    }
    expect(t.logs).toEqual([]);
  });
});
