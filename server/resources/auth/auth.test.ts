// Sign-in, sessions and their refusal: tampered, expired, revoked and foreign tokens, deactivated
// accounts, and the login rate limit. Session handling is common practice (signed JWT in an
// http-only cookie, RFC 7519 for the token format), no further source.
import jwt from 'jsonwebtoken';
import supertest from 'supertest';
import { createApp } from '../../app';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { SESSION_COOKIE } from '../../http/auth';
import { PASSWORD, cookieFor, makeProject, makeUser, addMember } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
beforeAll(async () => { t = await startTestServer(); });
afterAll(async () => t?.close());

function sessionFrom(setCookie: string[] | string | undefined): string {
  const all = Array.isArray(setCookie) ? setCookie : setCookie ? [setCookie] : [];
  const c = all.find((s) => s.startsWith(`${SESSION_COOKIE}=`));
  if (!c) throw new Error('no session cookie set');
  return c;
}

describe('login', () => {
  it('signs in with e-mail (any case) and password, in an http-only SameSite=Lax cookie', async () => {
    const user = await makeUser(t.ctx, { email: 'mixed@example.test' });
    const project = await makeProject(t.ctx);
    await addMember(t.ctx, project, user, 'engineer');
    const res = await t.http().post('/api/auth/login').send({ email: ' Mixed@Example.TEST ', password: PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.user).toMatchObject({ email: 'mixed@example.test', isAdmin: false, active: true });
    expect(res.body.user.passwordHash).toBeUndefined();
    expect(res.body.memberships).toEqual([{ project: { slug: project.slug, name: project.name }, role: 'engineer' }]);
    const cookie = sessionFrom(res.headers['set-cookie']);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    const me = await t.http().get('/api/auth/me').set('Cookie', cookie.split(';')[0]!);
    expect(me.status).toBe(200);
    expect(me.body.user.id).toBe(user.id);
  });

  it('refuses a wrong password and an unknown address with the same answer', async () => {
    const user = await makeUser(t.ctx);
    const wrong = await t.http().post('/api/auth/login').send({ email: user.email, password: 'nope' });
    const unknown = await t.http().post('/api/auth/login').send({ email: 'nobody@example.test', password: 'nope' });
    expect(wrong.status).toBe(401);
    expect(unknown.status).toBe(401);
    expect(wrong.body).toEqual(unknown.body);
    expect(wrong.headers['set-cookie']).toBeUndefined();
  });

  it('refuses a deactivated account, and its existing session', async () => {
    const user = await makeUser(t.ctx);
    const cookie = cookieFor(t.ctx, user);
    expect((await t.http().get('/api/auth/me').set('Cookie', cookie)).status).toBe(200);
    await user.update({ deactivatedAt: new Date() });
    expect((await t.http().post('/api/auth/login').send({ email: user.email, password: PASSWORD })).status).toBe(401);
    const me = await t.http().get('/api/auth/me').set('Cookie', cookie);
    expect(me.status).toBe(401);
  });

  it('rejects a malformed body with 400, not 500', async () => {
    const res = await t.http().post('/api/auth/login').send({ email: 42 });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('bad-request');
  });
});

describe('sessions that must be refused', () => {
  async function meWith(token: string) {
    return t.http().get('/api/auth/me').set('Cookie', `${SESSION_COOKIE}=${token}`);
  }

  it('a token whose payload was altered (signature no longer matches)', async () => {
    const victim = await makeUser(t.ctx);
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const token = cookieFor(t.ctx, victim).split('=')[1]!;
    const [h, p, s] = token.split('.');
    const payload = JSON.parse(Buffer.from(p!, 'base64url').toString());
    payload.sub = String(admin.id);
    const forged = `${h}.${Buffer.from(JSON.stringify(payload)).toString('base64url')}.${s}`;
    const res = await meWith(forged);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe('invalid-credentials');
  });

  it('a token signed with another secret, and an unsigned one (alg none)', async () => {
    const user = await makeUser(t.ctx);
    const other = jwt.sign({}, 'some other secret', { subject: String(user.id), jwtid: 'x', expiresIn: 600 });
    expect((await meWith(other)).status).toBe(401);
    const none = jwt.sign({}, '', { algorithm: 'none', subject: String(user.id), jwtid: 'y', expiresIn: 600 });
    expect((await meWith(none)).status).toBe(401);
  });

  it('an expired token', async () => {
    const user = await makeUser(t.ctx);
    const expired = jwt.sign({ exp: Math.floor(Date.now() / 1000) - 60 }, t.ctx.config.jwtSecret, { algorithm: 'HS256', subject: String(user.id), jwtid: 'z' });
    const res = await meWith(expired);
    expect(res.status).toBe(401);
  });

  it('a token that was accepted before (kept as verified) is refused once it expires, on the history page too', async () => {
    const project = await makeProject(t.ctx);
    const user = await makeUser(t.ctx);
    await addMember(t.ctx, project, user, 'viewer');
    const exp = Math.floor(Date.now() / 1000) + 3600;
    const token = jwt.sign({ exp, ep: 0 }, t.ctx.config.jwtSecret, { algorithm: 'HS256', subject: String(user.id), jwtid: 'kept' });
    const history = () => t.http().get(`/api/projects/${project.slug}/branches/main/runs`).set('Cookie', `${SESSION_COOKIE}=${token}`);
    expect((await meWith(token)).status).toBe(200);
    expect((await history()).status).toBe(200);
    // The clock moved to the token's expiry (only Date is faked: the server's sockets keep their timers).
    vi.useFakeTimers({ toFake: ['Date'], now: exp * 1000 });
    try {
      const me = await meWith(token);
      expect(me.status).toBe(401);
      expect(me.body.error.code).toBe('invalid-credentials');
      expect((await history()).status).toBe(401);
    } finally {
      vi.useRealTimers();
    }
    // The same token with one character of its signature changed is refused, verified or not.
    const forged = token.slice(0, -2) + (token.at(-2) === 'A' ? 'B' : 'A') + token.at(-1);
    expect((await meWith(forged)).status).toBe(401);
  });

  it('a token after logout (revoked), while another session of the same person still works', async () => {
    const user = await makeUser(t.ctx);
    const first = cookieFor(t.ctx, user);
    const second = cookieFor(t.ctx, user);
    const out = await t.http().post('/api/auth/logout').set('Cookie', first);
    expect(out.status).toBe(204);
    expect(String(out.headers['set-cookie'])).toMatch(new RegExp(`${SESSION_COOKIE}=;`));
    expect((await t.http().get('/api/auth/me').set('Cookie', first)).status).toBe(401);
    expect((await t.http().get('/api/auth/me').set('Cookie', second)).status).toBe(200);
  });
});

describe('login rate limit', () => {
  it('answers 429 after too many failed attempts, counted in PostgreSQL for every instance', async () => {
    const limited = await startTestServer({ config: { login: { windowMs: 60_000, limit: 3 } } });
    try {
      const user = await makeUser(limited.ctx);
      // Successful sign-ins do not count against the limit.
      for (let i = 0; i < 4; i++) {
        expect((await limited.http().post('/api/auth/login').send({ email: user.email, password: PASSWORD })).status).toBe(200);
      }
      const statuses: number[] = [];
      for (let i = 0; i < 4; i++) {
        statuses.push((await limited.http().post('/api/auth/login').send({ email: user.email, password: 'wrong' })).status);
      }
      expect(statuses).toEqual([401, 401, 401, 429]);
      const blocked = await limited.http().post('/api/auth/login').send({ email: user.email, password: PASSWORD });
      expect(blocked.status).toBe(429);
      expect(blocked.body.error.code).toBe('rate-limited');
      // The counter lives in the database, not in the process: a second instance of the app refuses too.
      const twin = createApp(limited.ctx);
      expect((await supertest(twin).post('/api/auth/login').send({ email: user.email, password: PASSWORD })).status).toBe(429);
      const [rows] = await limited.db.sequelize.query("SELECT hits FROM rate_limits WHERE key LIKE 'login:%'");
      expect((rows as { hits: number }[])[0]!.hits).toBeGreaterThanOrEqual(4);
    } finally {
      await limited.close();
    }
  });
});
