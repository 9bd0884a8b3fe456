// Members and invitations, with the invitation mail caught by a fake SMTP server on a random port.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SESSION_COOKIE } from '../../http/auth';
import { cookieFor, makeInvitation, makeMember, makeProject, makeUser } from '../../test/factories';
import { receivedMail } from '../../test/mail';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

let t: TestServer;
let project: Project;
let lead: User;

beforeAll(async () => {
  t = await startTestServer({ mail: true });
  project = await makeProject(t.ctx, { name: 'Radio Channelizer' });
  lead = await makeMember(t.ctx, project, 'lead');
});
afterAll(async () => t?.close());

const asLead = () => ({ Cookie: cookieFor(t.ctx, lead) });

describe('members', () => {
  it('adds an existing account directly, changes its role and removes it', async () => {
    const person = await makeUser(t.ctx);
    const added = await t.http().post(`/api/projects/${project.slug}/members`).set(asLead()).send({ email: person.email.toUpperCase(), role: 'viewer' });
    expect(added.status).toBe(201);
    expect(added.body.member).toMatchObject({ user: { id: person.id }, role: 'viewer' });
    const again = await t.http().post(`/api/projects/${project.slug}/members`).set(asLead()).send({ email: person.email, role: 'lead' });
    expect(again.status).toBe(409);
    const changed = await t.http().patch(`/api/projects/${project.slug}/members/${person.id}`).set(asLead()).send({ role: 'engineer' });
    expect(changed.body.member.role).toBe('engineer');
    // Watches go with the membership.
    await t.http().put(`/api/projects/${project.slug}/branches/main/watch`).set('Cookie', cookieFor(t.ctx, person)).expect(201);
    expect((await t.http().delete(`/api/projects/${project.slug}/members/${person.id}`).set(asLead())).status).toBe(204);
    expect(await t.ctx.db.models.Watch.count({ where: { userId: person.id } })).toBe(0);
    expect((await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, person))).status).toBe(404);
  });

  it('keeps at least one lead', async () => {
    const solo = await makeProject(t.ctx);
    const only = await makeMember(t.ctx, solo, 'lead');
    const demote = await t.http().patch(`/api/projects/${solo.slug}/members/${only.id}`).set('Cookie', cookieFor(t.ctx, only)).send({ role: 'viewer' });
    expect(demote.status).toBe(409);
    expect(demote.body.error.code).toBe('last-lead');
    expect((await t.http().delete(`/api/projects/${solo.slug}/members/${only.id}`).set('Cookie', cookieFor(t.ctx, only))).status).toBe(409);
  });
});

describe('invitations', () => {
  it('mails a one-time link to an unknown address; accepting it creates the account, the membership and a session', async () => {
    const before = t.smtp!.messages.length;
    const res = await t.http().post(`/api/projects/${project.slug}/members`).set(asLead()).send({ email: 'new.engineer@example.test', role: 'engineer' });
    expect(res.status).toBe(202);
    expect(res.body.invitation).toMatchObject({ email: 'new.engineer@example.test', role: 'engineer', project: { slug: project.slug } });

    const mail = await receivedMail(t, before);
    expect(mail).toHaveLength(1);
    expect(mail[0]!.to).toEqual(['new.engineer@example.test']);
    expect(mail[0]!.subject).toContain('Radio Channelizer');
    const link = /http:\/\/pleat\.test\/invitations\/([A-Za-z0-9_-]+)/.exec(mail[0]!.text);
    expect(link).not.toBeNull();
    const secret = link![1]!;

    const info = await t.http().get(`/api/invitations/${secret}`);
    expect(info.status).toBe(200);
    expect(info.body).toMatchObject({ invitation: { email: 'new.engineer@example.test', role: 'engineer' }, accountExists: false });

    const weak = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'Nia', password: 'short' });
    expect(weak.status).toBe(400);
    const accepted = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'Nia', password: 'a sound passphrase' });
    expect(accepted.status).toBe(200);
    expect(accepted.body).toMatchObject({ user: { email: 'new.engineer@example.test', name: 'Nia' }, role: 'engineer', signedIn: true });
    const cookie = String(accepted.headers['set-cookie']).split(';')[0]!;
    expect(cookie.startsWith(`${SESSION_COOKIE}=`)).toBe(true);
    const me = await t.http().get('/api/auth/me').set('Cookie', cookie);
    expect(me.body.memberships).toEqual([{ project: { slug: project.slug, name: 'Radio Channelizer' }, role: 'engineer' }]);

    const reused = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'Eve', password: 'another passphrase' });
    expect(reused.status).toBe(410);
    expect(reused.body.error.code).toBe('invitation-used');
  });

  it('refuses an expired link and an unknown one', async () => {
    const { secret } = await makeInvitation(t.ctx, project, { expired: true });
    const res = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'Late', password: 'a sound passphrase' });
    expect(res.status).toBe(410);
    expect(res.body.error.code).toBe('invitation-expired');
    expect((await t.http().get('/api/invitations/not-a-real-token')).status).toBe(404);
  });

  it('adds an existing account through a link without touching its password or signing it in', async () => {
    const person = await makeUser(t.ctx);
    const hash = person.passwordHash;
    const { secret } = await makeInvitation(t.ctx, project, { email: person.email, role: 'viewer' });
    const res = await t.http().post(`/api/invitations/${secret}/accept`).send({ password: 'would overwrite' });
    expect(res.status).toBe(200);
    expect(res.body.signedIn).toBe(false);
    expect(res.headers['set-cookie']).toBeUndefined();
    await person.reload();
    expect(person.passwordHash).toBe(hash);
  });

  it('lets a lead list and withdraw pending invitations', async () => {
    const { invitation } = await makeInvitation(t.ctx, project);
    const list = await t.http().get(`/api/projects/${project.slug}/invitations`).set(asLead());
    expect(list.body.invitations.map((i: { id: number }) => i.id)).toContain(invitation.id);
    expect((await t.http().delete(`/api/projects/${project.slug}/invitations/${invitation.id}`).set(asLead())).status).toBe(204);
    expect((await t.http().delete(`/api/projects/${project.slug}/invitations/${invitation.id}`).set(asLead())).status).toBe(404);
  });
});
