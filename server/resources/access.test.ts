// Every API route, called by every kind of caller: the status each one must get. The 401s, 403s
// and 404s are asserted as carefully as the 200s (common practice for role-based access, no
// source). The expected statuses follow docs/roles.md and the route table of docs/server.md.
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Test } from 'supertest';
import { ingestRun } from './runs/ingest';
import { sealToken } from './hosts/secret';
import { saveConnection } from './hosts/store';
import { addMember, cookieFor, makeCiToken, makeProject, makeInvitation, makeJob, makeMember, makeReport, makeUser, makeWorld, randomCommit, type World } from '../test/factories';
import { startTestServer, type TestServer } from '../test/server';

const WHO = ['admin', 'lead', 'engineer', 'viewer', 'outsider', 'anonymous', 'ciOwn', 'ciOther'] as const;
type Who = (typeof WHO)[number];

/** Expected statuses in the order of WHO: admin lead engineer viewer outsider anonymous ciOwn ciOther. */
function row(statuses: string): Record<Who, number> {
  const codes = statuses.trim().split(/\s+/).map(Number);
  if (codes.length !== WHO.length) throw new Error(`row needs ${WHO.length} statuses: ${statuses}`);
  return Object.fromEntries(WHO.map((w, i) => [w, codes[i]])) as Record<Who, number>;
}

interface Prepared { [key: string]: string | number }
interface Case {
  route: string;
  method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  /** Builds what one call needs (fresh for each caller, so calls do not disturb each other). */
  prepare?: (t: TestServer, w: World) => Promise<Prepared>;
  path: (p: Prepared, w: World) => string;
  body?: (p: Prepared, w: World) => object;
  design?: boolean;
  expect: Record<Who, number>;
}

const design = readFileSync(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url));
const slug = (_p: Prepared, w: World) => w.project.slug;

const CASES: Case[] = [
  //                                                                           adm lead eng view out anon ciOwn ciOther
  { route: 'GET /api/health', method: 'get', path: () => '/api/health', expect: row('200 200 200 200 200 200 200 200') },
  { route: 'GET /api/health/live', method: 'get', path: () => '/api/health/live', expect: row('200 200 200 200 200 200 200 200') },
  { route: 'POST /api/auth/login (wrong password)', method: 'post', path: () => '/api/auth/login',
    body: (_p, w) => ({ email: w.lead.email, password: 'not the password' }), expect: row('401 401 401 401 401 401 401 401') },
  { route: 'POST /api/auth/logout', method: 'post', path: () => '/api/auth/logout', expect: row('204 204 204 204 204 204 204 204') },
  { route: 'GET /api/auth/me', method: 'get', path: () => '/api/auth/me', expect: row('200 200 200 200 200 401 403 403') },
  { route: 'GET /api/projects', method: 'get', path: () => '/api/projects', expect: row('200 200 200 200 200 401 403 403') },
  { route: 'POST /api/projects', method: 'post', path: () => '/api/projects',
    body: () => ({ slug: `new-${randomCommit().slice(0, 8)}`, name: 'New' }), expect: row('201 403 403 403 403 401 403 403') },
  { route: 'GET /api/projects/:slug', method: 'get', path: (p, w) => `/api/projects/${w.project.slug}`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'PATCH /api/projects/:slug', method: 'patch', path: (p, w) => `/api/projects/${w.project.slug}`,
    body: () => ({ name: 'Renamed' }), expect: row('200 200 403 403 404 401 403 403') },
  // A fresh project per caller, with the world's people in their roles, so each call has one to delete.
  { route: 'DELETE /api/projects/:slug', method: 'delete',
    prepare: async (t, w) => {
      const p = await makeProject(t.ctx);
      for (const [who, role] of [['lead', 'lead'], ['engineer', 'engineer'], ['viewer', 'viewer']] as const) await addMember(t.ctx, p, w[who], role);
      return { slug: p.slug };
    },
    path: (p) => `/api/projects/${p.slug}`, body: (p) => ({ confirm: p.slug }), expect: row('204 403 403 403 403 401 403 403') },
  { route: 'GET /api/projects/:slug/branches', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/branches`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'GET /api/projects/:slug/branches/:branch/runs', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/branches/main/runs`,
    expect: row('200 200 200 200 404 401 403 403') },
  { route: 'GET /api/runs/:id', method: 'get',
    prepare: async (t, w) => ({ id: (await ingestRun(t.ctx, w.project, makeReport())).id }),
    path: (p) => `/api/runs/${p.id}`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'GET /api/runs/:id/download/:file', method: 'get',
    prepare: async (t, w) => ({ id: (await ingestRun(t.ctx, w.project, makeReport())).id }),
    path: (p) => `/api/runs/${p.id}/download/report.json`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'POST /api/projects/:slug/runs', method: 'post', path: (p, w) => `/api/projects/${slug(p, w)}/runs`,
    body: () => makeReport(), expect: row('403 403 403 403 403 401 201 403') },
  { route: 'GET /api/projects/:slug/rules', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/rules`, expect: row('200 200 200 200 404 401 200 403') },
  { route: 'PUT /api/projects/:slug/rules', method: 'put', path: (p, w) => `/api/projects/${slug(p, w)}/rules`,
    body: () => ({ rules: { min_utilization: 0.6 } }), expect: row('200 200 403 403 404 401 403 403') },
  { route: 'POST /api/projects/:slug/rules/revert', method: 'post',
    prepare: async (t, w) => ({ id: (await t.ctx.db.models.RuleChange.create({ projectId: w.project.id, userId: w.lead.id, rule: 'max_registers', oldValue: null, newValue: 64 })).id }),
    path: (p, w) => `/api/projects/${slug(p, w)}/rules/revert`, body: (p) => ({ to: p.id, reason: 'access test' }),
    expect: row('200 200 403 403 404 401 403 403') },
  { route: 'GET /api/projects/:slug/rules/history', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/rules/history`,
    expect: row('200 200 200 200 404 401 403 403') },
  { route: 'GET /api/projects/:slug/tokens', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/tokens`, expect: row('200 200 403 403 404 401 403 403') },
  { route: 'POST /api/projects/:slug/tokens', method: 'post', path: (p, w) => `/api/projects/${slug(p, w)}/tokens`,
    body: () => ({ name: 'runner' }), expect: row('201 201 403 403 404 401 403 403') },
  { route: 'DELETE /api/projects/:slug/tokens/:id', method: 'delete',
    prepare: async (t, w) => ({ id: (await makeCiToken(t.ctx, w.project)).id }),
    path: (p, w) => `/api/projects/${w.project.slug}/tokens/${p.id}`, expect: row('200 200 403 403 404 401 403 403') },
  // The git host connection: a lead's settings (docs/server.md, Git hosts).
  { route: 'GET /api/projects/:slug/host', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/host`, expect: row('200 200 403 403 404 401 403 403') },
  { route: 'PUT /api/projects/:slug/host', method: 'put', path: (p, w) => `/api/projects/${slug(p, w)}/host`,
    body: () => ({ kind: 'github', repository: 'acme/access', token: 'token-for-access-test' }), expect: row('200 200 403 403 404 401 403 403') },
  { route: 'DELETE /api/projects/:slug/host', method: 'delete',
    prepare: async (t, w) => {
      await saveConnection(t.ctx, { projectId: w.project.id, kind: 'gitlab', apiUrl: 'https://gitlab.example.test/api/v4', repository: 'g/p',
        sealed: sealToken(t.ctx.config.secretKey!, w.project.id, 'token-for-access-test'), last4: 'test', userId: w.lead.id });
      return {};
    },
    path: (p, w) => `/api/projects/${slug(p, w)}/host`, expect: row('204 204 403 403 404 401 403 403') },
  { route: 'GET /api/projects/:slug/members', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/members`, expect: row('200 200 403 403 404 401 403 403') },
  { route: 'POST /api/projects/:slug/members', method: 'post',
    prepare: async (t) => ({ email: (await makeUser(t.ctx)).email }),
    path: (p, w) => `/api/projects/${w.project.slug}/members`, body: (p) => ({ email: p.email, role: 'viewer' }),
    expect: row('201 201 403 403 404 401 403 403') },
  { route: 'PATCH /api/projects/:slug/members/:userId', method: 'patch',
    prepare: async (t, w) => ({ id: (await makeMember(t.ctx, w.project, 'viewer')).id }),
    path: (p, w) => `/api/projects/${w.project.slug}/members/${p.id}`, body: () => ({ role: 'engineer' }),
    expect: row('200 200 403 403 404 401 403 403') },
  { route: 'DELETE /api/projects/:slug/members/:userId', method: 'delete',
    prepare: async (t, w) => ({ id: (await makeMember(t.ctx, w.project, 'viewer')).id }),
    path: (p, w) => `/api/projects/${w.project.slug}/members/${p.id}`, expect: row('204 204 403 403 404 401 403 403') },
  { route: 'GET /api/projects/:slug/invitations', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/invitations`,
    expect: row('200 200 403 403 404 401 403 403') },
  { route: 'DELETE /api/projects/:slug/invitations/:id', method: 'delete',
    prepare: async (t, w) => ({ id: (await makeInvitation(t.ctx, w.project)).invitation.id }),
    path: (p, w) => `/api/projects/${w.project.slug}/invitations/${p.id}`, expect: row('204 204 403 403 404 401 403 403') },
  { route: 'GET /api/invitations/:token', method: 'get',
    prepare: async (t, w) => ({ secret: (await makeInvitation(t.ctx, w.project)).secret }),
    path: (p) => `/api/invitations/${p.secret}`, expect: row('200 200 200 200 200 200 200 200') },
  { route: 'POST /api/invitations/:token/accept', method: 'post',
    prepare: async (t, w) => ({ secret: (await makeInvitation(t.ctx, w.project)).secret }),
    path: (p) => `/api/invitations/${p.secret}/accept`, body: () => ({ name: 'New Person', password: 'a long password' }),
    expect: row('200 200 200 200 200 200 200 200') },
  { route: 'GET /api/users', method: 'get', path: () => '/api/users', expect: row('200 403 403 403 403 401 403 403') },
  { route: 'POST /api/users', method: 'post', path: () => '/api/users',
    body: () => ({ email: `made-${randomCommit().slice(0, 10)}@example.test`, name: 'Made', password: 'a long password' }),
    expect: row('201 403 403 403 403 401 403 403') },
  { route: 'PATCH /api/users/:id', method: 'patch',
    prepare: async (t) => ({ id: (await makeUser(t.ctx)).id }),
    path: (p) => `/api/users/${p.id}`, body: () => ({ active: false }), expect: row('200 403 403 403 403 401 403 403') },
  { route: 'GET /api/projects/:slug/watches', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/watches`,
    expect: row('200 200 200 403 404 401 403 403') },
  { route: 'PUT /api/projects/:slug/branches/:branch/watch', method: 'put',
    path: (p, w) => `/api/projects/${slug(p, w)}/branches/feature%2Fwatched/watch`, expect: row('201 201 201 403 404 401 403 403') },
  { route: 'DELETE /api/projects/:slug/branches/:branch/watch', method: 'delete',
    path: (p, w) => `/api/projects/${slug(p, w)}/branches/main/watch`, expect: row('200 200 200 403 404 401 403 403') },
  // The outsider leads another project, so may try designs; a viewer may not.
  { route: 'POST /api/analyze', method: 'post', path: () => '/api/analyze', design: true, expect: row('200 200 200 403 200 401 403 403') },
  // Jobs: engineers and above start and cancel; every member sees them (docs/server.md, Jobs).
  { route: 'POST /api/projects/:slug/jobs', method: 'post', path: (p, w) => `/api/projects/${slug(p, w)}/jobs`,
    body: () => ({ kind: 'plan', design: { text: design.toString('utf8'), file: 'sensor-frontend.fold.yaml' }, timeLimitSeconds: 1 }),
    expect: row('201 201 201 403 404 401 403 403') },
  { route: 'GET /api/projects/:slug/jobs', method: 'get', path: (p, w) => `/api/projects/${slug(p, w)}/jobs`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'GET /api/jobs/:id', method: 'get',
    prepare: async (t, w) => ({ id: await makeJob(t.ctx, w.project, w.engineer) }),
    path: (p) => `/api/jobs/${p.id}`, expect: row('200 200 200 200 404 401 403 403') },
  { route: 'POST /api/jobs/:id/cancel', method: 'post',
    prepare: async (t, w) => ({ id: await makeJob(t.ctx, w.project, w.engineer) }),
    path: (p) => `/api/jobs/${p.id}/cancel`, expect: row('200 200 200 403 404 401 403 403') },
  // The sent-mail viewer exists only in development; under test it is absent for everyone.
  { route: 'GET /api/dev/mail', method: 'get', path: () => '/api/dev/mail', expect: row('404 404 404 404 404 404 404 404') },
  { route: 'GET /api/no-such-route', method: 'get', path: () => '/api/no-such-route', expect: row('404 404 404 404 404 404 404 404') },
];

let t: TestServer;
let w: World;

beforeAll(async () => {
  t = await startTestServer();
  w = await makeWorld(t.ctx);
});
afterAll(async () => t?.close());

function call(c: Case, who: Who, p: Prepared): Test {
  const agent = t.http();
  let req = agent[c.method](c.path(p, w));
  if (who === 'ciOwn' || who === 'ciOther') req = req.set('Authorization', `Bearer ${who === 'ciOwn' ? w.ciOwn : w.ciOther}`);
  else if (who !== 'anonymous') req = req.set('Cookie', cookieFor(t.ctx, w[who]));
  if (c.design) return req.attach('design', design, 'sensor-frontend.fold.yaml');
  if (c.body) return req.send(c.body(p, w));
  return req;
}

describe('every route checks the role on the server', () => {
  it('covers every route the app registers', () => {
    // A route added without a row here would go untested: compare with Express's own route table.
    const registered = new Set<string>();
    const stack = (t.app as unknown as { router: { stack: { handle?: { stack?: { route?: { path: string; methods: Record<string, boolean> } }[] } }[] } }).router.stack;
    for (const layer of stack) {
      for (const inner of layer.handle?.stack ?? []) {
        if (!inner.route) continue;
        for (const m of Object.keys(inner.route.methods)) registered.add(`${m.toUpperCase()} ${inner.route.path}`);
      }
    }
    expect(registered.size).toBeGreaterThanOrEqual(CASES.length - 2);
    const covered = new Set(CASES.map((c) => c.route.replace(/ \(.*\)$/, '')));
    const missing = [...registered].filter((r) => !covered.has(r) && !r.startsWith('GET /api/dev/mail/'));
    expect(missing).toEqual([]);
  });

  for (const c of CASES) {
    it(c.route, async () => {
      const actual = {} as Record<Who, number>;
      for (const who of WHO) {
        const p = c.prepare ? await c.prepare(t, w) : {};
        const res = await call(c, who, p);
        actual[who] = res.status;
        if (res.status >= 400) {
          // Errors are JSON {error: {code, message}} and never show a stack.
          expect(res.body?.error?.code, `${c.route} as ${who}`).toEqual(expect.any(String));
          expect(res.body.error.message).toEqual(expect.any(String));
          expect(res.text).not.toMatch(/\bat .+\.(ts|js):\d+/);
        }
      }
      expect(actual).toEqual(c.expect);
    });
  }
});
