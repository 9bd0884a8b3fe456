// Accounts, managed by admins.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cookieFor, makeUser } from '../../test/factories';
import { receivedMail } from '../../test/mail';
import { startTestServer, type TestServer } from '../../test/server';
import type { User } from '../../db/models';

let t: TestServer;
let admin: User;

beforeAll(async () => {
  t = await startTestServer({ mail: true });
  admin = await makeUser(t.ctx, { isAdmin: true });
});
afterAll(async () => t?.close());

const asAdmin = () => ({ Cookie: cookieFor(t.ctx, admin) });

describe('users', () => {
  it('creates an account with a password that can sign in, and refuses a second one for the same address', async () => {
    const res = await t.http().post('/api/users').set(asAdmin()).send({ email: 'Ana@Example.test', name: 'Ana', password: 'ana passphrase' });
    expect(res.status).toBe(201);
    expect(res.body.user).toMatchObject({ email: 'ana@example.test', name: 'Ana', isAdmin: false, active: true });
    const login = await t.http().post('/api/auth/login').send({ email: 'ana@example.test', password: 'ana passphrase' });
    expect(login.status).toBe(200);
    const dup = await t.http().post('/api/users').set(asAdmin()).send({ email: 'ana@example.test', password: 'x passphrase' });
    expect(dup.status).toBe(409);
  });

  it('invites by e-mail when no password is given', async () => {
    const before = t.smtp!.messages.length;
    const res = await t.http().post('/api/users').set(asAdmin()).send({ email: 'bo@example.test', isAdmin: true });
    expect(res.status).toBe(202);
    expect(res.body.invitation).toMatchObject({ email: 'bo@example.test', isAdmin: true, project: null });
    const mail = await receivedMail(t, before);
    expect(mail.map((m) => m.to)).toEqual([['bo@example.test']]);
    const secret = /invitations\/([A-Za-z0-9_-]+)/.exec(mail[0]!.text)![1]!;
    const accepted = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'Bo', password: 'bo passphrase' });
    expect(accepted.body.user).toMatchObject({ email: 'bo@example.test', isAdmin: true });
  });

  it('deactivates an account: its sessions and sign-in stop working; reactivation restores sign-in, not the old sessions', async () => {
    const u = await makeUser(t.ctx);
    const cookie = cookieFor(t.ctx, u);
    const off = await t.http().patch(`/api/users/${u.id}`).set(asAdmin()).send({ active: false });
    expect(off.body.user.active).toBe(false);
    expect((await t.http().get('/api/auth/me').set('Cookie', cookie)).status).toBe(401);
    const on = await t.http().patch(`/api/users/${u.id}`).set(asAdmin()).send({ active: true });
    expect(on.body.user.active).toBe(true);
    expect((await t.http().get('/api/auth/me').set('Cookie', cookie)).status).toBe(401);
    await u.reload();
    expect((await t.http().get('/api/auth/me').set('Cookie', cookieFor(t.ctx, u))).status).toBe(200);
  });

  it('does not let an admin deactivate or demote themselves', async () => {
    expect((await t.http().patch(`/api/users/${admin.id}`).set(asAdmin()).send({ active: false })).status).toBe(403);
    expect((await t.http().patch(`/api/users/${admin.id}`).set(asAdmin()).send({ isAdmin: false })).status).toBe(403);
    expect((await t.http().patch(`/api/users/${admin.id}`).set(asAdmin()).send({ name: 'Still Admin' })).status).toBe(200);
  });

  it('lists accounts without password hashes', async () => {
    const res = await t.http().get('/api/users').set(asAdmin());
    expect(res.status).toBe(200);
    expect(res.body.users.length).toBeGreaterThan(1);
    expect(JSON.stringify(res.body)).not.toMatch(/passwordHash|\$2[aby]\$/);
  });
});
