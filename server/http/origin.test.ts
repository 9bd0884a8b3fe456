// Cross-site request forgery and security headers. A forged request is what a page on another
// site makes the browser send: the session cookie rides along, and the browser labels the request
// with Origin (RFC 6454) and Sec-Fetch-Site (W3C Fetch Metadata). Those labels are what the test
// sets; a non-browser caller sends neither.
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project, User } from '../db/models';
import { cookieFor, makeCiToken, makeMember, makeProject, makeReport } from '../test/factories';
import { startTestServer, type TestServer } from '../test/server';

let t: TestServer;
let project: Project;
let lead: User;
let token: string;
const EVIL = 'https://evil.example';
const design = readFileSync(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url));

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  lead = await makeMember(t.ctx, project, 'lead');
  token = (await makeCiToken(t.ctx, project)).secret;
});
afterAll(async () => t?.close());

describe('state-changing requests with a session cookie', () => {
  it('are refused from another origin: logout, a settings change, a multipart analysis', async () => {
    const cookie = cookieFor(t.ctx, lead);
    const logout = await t.http().post('/api/auth/logout').set('Cookie', cookie).set('Origin', EVIL);
    expect(logout.status).toBe(403);
    expect(logout.body.error.code).toBe('cross-origin');
    // The forged logout did nothing: the session still works.
    expect((await t.http().get('/api/auth/me').set('Cookie', cookie)).status).toBe(200);

    const patch = await t.http().patch(`/api/projects/${project.slug}`).set('Cookie', cookie).set('Sec-Fetch-Site', 'cross-site').send({ name: 'Forged' });
    expect(patch.status).toBe(403);
    const sibling = await t.http().patch(`/api/projects/${project.slug}`).set('Cookie', cookie).set('Sec-Fetch-Site', 'same-site').send({ name: 'Forged' });
    expect(sibling.status).toBe(403);
    await project.reload();
    expect(project.name).not.toBe('Forged');

    const analyze = await t.http().post('/api/analyze').set('Cookie', cookie).set('Origin', EVIL).attach('design', design, 'x.fold.yaml');
    expect(analyze.status).toBe(403);
  });

  it('pass from the app\'s own origin, by Origin or by Sec-Fetch-Site', async () => {
    const cookie = cookieFor(t.ctx, lead);
    const own = await t.http().post('/api/analyze').set('Cookie', cookie).set('Origin', 'http://pleat.test').attach('design', design, 'x.fold.yaml');
    expect(own.status).toBe(200);
    const fetchMeta = await t.http().patch(`/api/projects/${project.slug}`).set('Cookie', cookie).set('Sec-Fetch-Site', 'same-origin').send({ name: 'Own' });
    expect(fetchMeta.status).toBe(200);
    expect((await t.http().post('/api/auth/logout').set('Cookie', cookie).set('Origin', 'http://pleat.test')).status).toBe(204);
  });

  it('a CI token (Authorization header) is not affected by Origin', async () => {
    const res = await t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${token}`).set('Origin', EVIL).send(makeReport());
    expect(res.status).toBe(201);
  });

  it('reads are not affected', async () => {
    const res = await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead)).set('Origin', EVIL).set('Sec-Fetch-Site', 'cross-site');
    expect(res.status).toBe(200);
  });
});

describe('security headers', () => {
  it('come with every answer: a content security policy, no framing, no sniffing, no HSTS over http', async () => {
    const res = await t.http().get('/api/health/live');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
    expect(res.headers['content-security-policy']).toContain("frame-ancestors 'none'");
    expect(res.headers['content-security-policy']).not.toContain('upgrade-insecure-requests');
    expect(res.headers['x-frame-options']).toBe('DENY');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['referrer-policy']).toBe('same-origin');
    expect(res.headers['strict-transport-security']).toBeUndefined();
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});
