// Sessions and deactivation: a session issued before a deactivation must stay dead when the
// account is reactivated (the token is still signed and unexpired, so only the server can tell).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PASSWORD, cookieFor, makeUser } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;

beforeAll(async () => {
  t = await startTestServer();
});
afterAll(async () => t?.close());

async function signIn(email: string): Promise<string> {
  const res = await t.http().post('/api/auth/login').send({ email, password: PASSWORD });
  expect(res.status).toBe(200);
  return String(res.headers['set-cookie']).split(';')[0]!;
}

describe('deactivation ends sessions for good', () => {
  it('an old session does not come back with the account', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const person = await makeUser(t.ctx);
    const old = await signIn(person.email);
    expect((await t.http().get('/api/auth/me').set('Cookie', old)).status).toBe(200);

    const asAdmin = { Cookie: cookieFor(t.ctx, admin) };
    expect((await t.http().patch(`/api/users/${person.id}`).set(asAdmin).send({ active: false })).status).toBe(200);
    expect((await t.http().get('/api/auth/me').set('Cookie', old)).status).toBe(401);
    expect((await t.http().patch(`/api/users/${person.id}`).set(asAdmin).send({ active: true })).status).toBe(200);

    expect((await t.http().get('/api/auth/me').set('Cookie', old)).status).toBe(401);
    const fresh = await signIn(person.email);
    expect((await t.http().get('/api/auth/me').set('Cookie', fresh)).status).toBe(200);
  });

  it('deactivating twice, or saving an active account, does not end sessions again', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const person = await makeUser(t.ctx);
    const asAdmin = { Cookie: cookieFor(t.ctx, admin) };
    const cookie = await signIn(person.email);
    expect((await t.http().patch(`/api/users/${person.id}`).set(asAdmin).send({ active: true, name: 'Renamed' })).status).toBe(200);
    expect((await t.http().get('/api/auth/me').set('Cookie', cookie)).status).toBe(200);
  });
});
