// Hostile input at the edge: every value below once reached PostgreSQL (or a handler) and came
// back as a 500. Each must now be a 4xx with a message that says what is wrong, and the server's
// log must stay empty of 500s. The limits are those of PostgreSQL's jsonb and integer types
// (PostgreSQL documentation, "JSON Types" and "Numeric Types").
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project, User } from '../db/models';
import { cookieFor, designEntry, makeCiToken, makeMember, makeProject, makeReport } from '../test/factories';
import { startTestServer, type TestServer } from '../test/server';

let t: TestServer;
let project: Project;
let token: string;
let lead: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  token = (await makeCiToken(t.ctx, project)).secret;
  lead = await makeMember(t.ctx, project, 'lead');
});
afterAll(async () => t?.close());

/** Sends raw JSON text, so that values JSON.stringify would never write (lone surrogates) arrive as sent. */
const uploadText = (text: string) =>
  t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${token}`).set('Content-Type', 'application/json').send(text);

function reportWith(edit: (r: Record<string, any>) => void): string {
  const r = JSON.parse(JSON.stringify(makeReport({ designs: [designEntry('notch')] })));
  edit(r);
  return JSON.stringify(r);
}

function expectClear4xx(res: { status: number; body: any }, pattern: RegExp) {
  expect(res.status, JSON.stringify(res.body)).toBeGreaterThanOrEqual(400);
  expect(res.status).toBeLessThan(500);
  expect(res.body.error.message).toMatch(pattern);
}

describe('uploads that used to give 500', () => {
  it('an edge that is null', async () => {
    const res = await uploadText(reportWith((r) => { r.designs[0].edges = [null]; }));
    expectClear4xx(res, /\/designs\/0\/edges\/0 must be object/);
  });

  it('a register count beyond the integer column, alone and summed', async () => {
    const big = await uploadText(reportWith((r) => { r.designs[0].registers.minimum = 2 ** 31; }));
    expectClear4xx(big, /\/designs\/0\/registers\/minimum must be <= 2147483647/);
    const sum = await uploadText(reportWith((r) => {
      r.designs = [0, 1].map((i) => ({ ...r.designs[0], name: `d${i}`, registers: { minimum: 2 ** 30 + 1 } }));
    }));
    expectClear4xx(sum, /register minima add up to 2147483650/);
  });

  it('a NUL character in a string, and in a key', async () => {
    const nul = await uploadText(reportWith((r) => { r.designs[0].file = 'hw/a\u0000.fold.yaml'; }));
    expectClear4xx(nul, /\/designs\/0\/file contains a NUL character/);
    const key = await uploadText(reportWith((r) => { r.extra = { 'a\u0000b': 1 }; }));
    expectClear4xx(key, /\/extra\/a\u0000b has a key that contains a NUL/);
  });

  it('a lone surrogate in a string', async () => {
    // JSON.stringify writes a lone surrogate as the escape \ud800 (ECMA-262, well-formed JSON.stringify).
    const text = reportWith((r) => { r.designs[0].name = 'x\ud800y'; });
    expect(text).toContain('\\ud800');
    expectClear4xx(await uploadText(text), /\/designs\/0\/name contains a lone UTF-16 surrogate/);
  });

  it('5,000-deep nesting in an extra field', async () => {
    const deep = '['.repeat(5000) + ']'.repeat(5000);
    const text = reportWith((r) => { r.extra = 'DEEP'; }).replace('"DEEP"', deep);
    expectClear4xx(await uploadText(text), /nests deeper than 64 levels/);
  });

  it('a number that overflows to Infinity', async () => {
    const text = reportWith((r) => { r.designs[0].utilization.overall = 0.5; }).replace('"overall":0.5', '"overall":1e999');
    expectClear4xx(await uploadText(text), /\/designs\/0\/utilization\/overall is not a finite number/);
  });

  it('a branch name with a bidirectional override or a zero-width space', async () => {
    for (const branch of ['main\u202e', 'fea\u200bture', 'a\u0007b']) {
      const res = await uploadText(reportWith((r) => { r.git.branch = branch; }));
      expectClear4xx(res, /\/git\/branch must be 1 to 255 characters without whitespace, control, bidirectional-override or zero-width/);
    }
  });
});

describe('history and paths', () => {
  const asLead = () => ({ Cookie: cookieFor(t.ctx, lead) });

  it('an oversized cursor (an id beyond the integer column, or a huge string)', async () => {
    for (const cursor of ['2026-01-01T00:00:00.000Z,9999999999', 'x'.repeat(100_000).slice(0, 8000)]) {
      const res = await t.http().get(`/api/projects/${project.slug}/branches/main/runs`).query({ cursor }).set(asLead());
      expectClear4xx(res, /cursor is not one this server gave out/);
    }
  });

  it('a NUL in a path parameter or a query', async () => {
    const a = await t.http().get(`/api/projects/${project.slug}/branches/ma%00in/runs`).set(asLead());
    expectClear4xx(a, /NUL character/);
    const b = await t.http().get(`/api/projects/${project.slug}/branches/main/runs?design=%00`).set(asLead());
    expectClear4xx(b, /NUL character/);
  });

  it('a bad percent-encoding in any path parameter, anonymous', async () => {
    const paths = [
      '/api/projects/%E0%A4/branches', '/api/projects/x/branches/%/runs', '/api/runs/%ff',
      '/api/invitations/%C0', '/api/projects/%zz', '/api/projects/x/members/%',
    ];
    for (const p of paths) {
      const res = await t.http().get(p);
      expectClear4xx(res, /malformed percent-encoding/);
    }
    const post = await t.http().post('/api/invitations/%E0%A4%A/accept').send({});
    expectClear4xx(post, /malformed percent-encoding/);
  });

  it('a NUL or a lone surrogate in any JSON body (a project name)', async () => {
    const res = await t.http().patch(`/api/projects/${project.slug}`).set(asLead()).set('Content-Type', 'application/json')
      .send('{"name":"a\\u0000b"}');
    expectClear4xx(res, /\/name contains a NUL/);
    const sur = await t.http().patch(`/api/projects/${project.slug}`).set(asLead()).set('Content-Type', 'application/json')
      .send('{"name":"a\\udc00b"}');
    expectClear4xx(sur, /\/name contains a lone UTF-16 surrogate/);
  });
});

describe('the log of a database error', () => {
  it('carries PostgreSQL\'s own message and code, not a bare Error', async () => {
    const { describeError } = await import('./errors');
    const err = await t.db.sequelize.query('SELECT 1/0').catch((e: unknown) => e);
    const line = describeError(err);
    // "division by zero" with SQLSTATE 22012 (PostgreSQL documentation, Appendix A, error codes).
    expect(line.split('\n')[0]).toBe('SequelizeDatabaseError: division by zero (PostgreSQL 22012)');
  });

  it('logged nothing as a 500 for all the input above', () => {
    expect(t.logs.filter((l) => /^(GET|POST|PATCH|PUT|DELETE) /.test(l))).toEqual([]);
  });
});
