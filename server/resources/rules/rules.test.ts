// Team rules: who may read and change them, and the history of every change.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cookieFor, makeCiToken, makeMember, makeProject } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

let t: TestServer;
let project: Project;
let lead: User;
let viewer: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  lead = await makeMember(t.ctx, project, 'lead');
  viewer = await makeMember(t.ctx, project, 'viewer');
});
afterAll(async () => t?.close());

const put = (rules: unknown, who = lead) => t.http().put(`/api/projects/${project.slug}/rules`).set('Cookie', cookieFor(t.ctx, who)).send({ rules });
const history = (q = '') => t.http().get(`/api/projects/${project.slug}/rules/history${q}`).set('Cookie', cookieFor(t.ctx, viewer));

describe('team rules', () => {
  it('records every changed rule with who, when, the old and the new value; unchanged rules leave no entry', async () => {
    const first = await put({ negative_delays: 'fail', min_utilization: 0.7 });
    expect(first.status).toBe(200);
    expect(first.body.changed).toEqual(['negative_delays', 'min_utilization']);
    expect(first.body.rules).toEqual({ negative_delays: 'fail', min_utilization: 0.7 });
    expect(first.body.updatedBy).toEqual({ id: lead.id, name: lead.name });

    const second = await put({ negative_delays: 'fail', max_registers: 64 });
    expect(second.body.changed).toEqual(['min_utilization', 'max_registers']);
    const same = await put({ negative_delays: 'fail', max_registers: 64 });
    expect(same.body.changed).toEqual([]);

    const res = await history();
    expect(res.status).toBe(200);
    expect(res.body.changes.map((c: { rule: string; oldValue: unknown; newValue: unknown }) => [c.rule, c.oldValue, c.newValue])).toEqual([
      ['max_registers', null, 64],
      ['min_utilization', 0.7, null],
      ['min_utilization', null, 0.7],
      ['negative_delays', null, 'fail'],
    ]);
    expect(res.body.changes.every((c: { by: { id: number }; at: string }) => c.by.id === lead.id && !Number.isNaN(Date.parse(c.at)))).toBe(true);
  });

  it('pages the history with `before`', async () => {
    const page1 = await history('?limit=2');
    expect(page1.body.changes).toHaveLength(2);
    expect(page1.body.nextBefore).toBe(page1.body.changes[1].id);
    const page2 = await history(`?limit=2&before=${page1.body.nextBefore}`);
    expect(page2.body.changes[0].id).toBeLessThan(page1.body.nextBefore);
  });

  it('refuses rules the CLI would not understand', async () => {
    // 1e308 and 2^53 + 2 pass JSON Schema's `integer` but name no register count the CLI can hold exactly.
    for (const bad of [{ min_utilization: 1.5 }, { negative_delays: 'maybe' }, { max_registers: 2.5 }, { max_regs: 3 }, { max_registers: 1e308 }, { max_registers: 2 ** 53 + 2 }, { min_utilization: -0.1 }]) {
      const res = await put(bad);
      expect(res.status, JSON.stringify(bad)).toBe(400);
      expect(res.body.error.details.length).toBeGreaterThan(0);
    }
  });

  it('gives the project CI token the current rules (the CLI applies them as a floor)', async () => {
    const { secret } = await makeCiToken(t.ctx, project);
    const res = await t.http().get(`/api/projects/${project.slug}/rules`).set('Authorization', `Bearer ${secret}`);
    expect(res.status).toBe(200);
    expect(res.body.rules).toEqual({ negative_delays: 'fail', max_registers: 64 });
    expect(res.body.regressionTolerance).toBe(0.05);
  });

  it('keeps the regression tolerance set by a lead in the same history', async () => {
    const res = await t.http().patch(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ regressionTolerance: 0.02 });
    expect(res.status).toBe(200);
    expect(res.body.project.regressionTolerance).toBe(0.02);
    const h = await history('?limit=1');
    expect(h.body.changes[0]).toMatchObject({ rule: 'regression_tolerance', oldValue: 0.05, newValue: 0.02, by: { id: lead.id } });
  });

  it('keeps the reason given with each change, for the rules and for the tolerance', async () => {
    const res = await t.http().put(`/api/projects/${project.slug}/rules`).set('Cookie', cookieFor(t.ctx, lead))
      .send({ rules: { negative_delays: 'fail', max_registers: 48 }, reason: '  The new FPGA has fewer flip-flops to spare.  ' });
    expect(res.body.changed).toEqual(['max_registers']);
    await t.http().patch(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead)).send({ regressionTolerance: 0.03, reason: 'Tighter gate before tape-out' }).expect(200);
    const h = await history('?limit=2');
    expect(h.body.changes.map((c: { rule: string; reason: string | null; revertOf: number | null }) => [c.rule, c.reason, c.revertOf])).toEqual([
      ['regression_tolerance', 'Tighter gate before tape-out', null],
      ['max_registers', 'The new FPGA has fewer flip-flops to spare.', null],
    ]);
    expect((await t.http().put(`/api/projects/${project.slug}/rules`).set('Cookie', cookieFor(t.ctx, lead)).send({ rules: {}, reason: 'x'.repeat(501) })).status).toBe(400);
  });

  it('reverts to the rules and tolerance as they were right after an earlier change, recording why', async () => {
    // Common practice, no source: a revert undoes every later change and is itself a change in the history.
    const p = await makeProject(t.ctx, { regressionTolerance: 0.05 });
    const l = await makeMember(t.ctx, p, 'lead');
    const putP = (rules: object) => t.http().put(`/api/projects/${p.slug}/rules`).set('Cookie', cookieFor(t.ctx, l)).send({ rules });
    await putP({ min_utilization: 0.7 }).expect(200);
    const hist = async () => (await t.http().get(`/api/projects/${p.slug}/rules/history`).set('Cookie', cookieFor(t.ctx, l))).body.changes;
    const target = (await hist())[0].id as number;
    await putP({ min_utilization: 0.8, max_registers: 32 }).expect(200);
    await t.http().patch(`/api/projects/${p.slug}`).set('Cookie', cookieFor(t.ctx, l)).send({ regressionTolerance: 0.1 }).expect(200);
    const res = await t.http().post(`/api/projects/${p.slug}/rules/revert`).set('Cookie', cookieFor(t.ctx, l)).send({ to: target, reason: 'The 80 % floor blocked every branch' });
    expect(res.status).toBe(200);
    expect(res.body.rules).toEqual({ min_utilization: 0.7 });
    expect(res.body.regressionTolerance).toBe(0.05);
    expect([...res.body.changed].sort()).toEqual(['max_registers', 'min_utilization', 'regression_tolerance']);
    const after = await hist();
    expect(after.slice(0, 3).every((c: { revertOf: number; reason: string }) => c.revertOf === target && c.reason === `Back to the rules after change #${target}: The 80 % floor blocked every branch`)).toBe(true);
    // The CLI's floor follows: the rules route gives the reverted rules.
    const now = await t.http().get(`/api/projects/${p.slug}/rules`).set('Cookie', cookieFor(t.ctx, l));
    expect(now.body.rules).toEqual({ min_utilization: 0.7 });
    // A change of another project, or none, is not found; a viewer may not revert.
    expect((await t.http().post(`/api/projects/${p.slug}/rules/revert`).set('Cookie', cookieFor(t.ctx, l)).send({ to: 999999 })).status).toBe(404);
    const v = await makeMember(t.ctx, p, 'viewer');
    expect((await t.http().post(`/api/projects/${p.slug}/rules/revert`).set('Cookie', cookieFor(t.ctx, v)).send({ to: target })).status).toBe(403);
  });

  it('stores the simulate gates max_overflows and min_sqnr_db with their reason, and refuses them out of range', async () => {
    const p = await makeProject(t.ctx);
    const l = await makeMember(t.ctx, p, 'lead');
    const putP = (body: object) => t.http().put(`/api/projects/${p.slug}/rules`).set('Cookie', cookieFor(t.ctx, l)).send(body);
    const res = await putP({ rules: { max_overflows: 0, min_sqnr_db: 72.5 }, reason: 'Tape-out: no overflow at all' });
    expect(res.status).toBe(200);
    expect(res.body.changed).toEqual(['max_overflows', 'min_sqnr_db']);
    expect(res.body.rules).toEqual({ max_overflows: 0, min_sqnr_db: 72.5 });
    const h = (await t.http().get(`/api/projects/${p.slug}/rules/history`).set('Cookie', cookieFor(t.ctx, l))).body.changes;
    expect(h.map((c: { rule: string; newValue: unknown; reason: string }) => [c.rule, c.newValue, c.reason])).toEqual([
      ['min_sqnr_db', 72.5, 'Tape-out: no overflow at all'],
      ['max_overflows', 0, 'Tape-out: no overflow at all'],
    ]);
    // The bounds of RULES_SCHEMA: overflows a whole number from 0, SQNR -1000 to 1000 dB.
    for (const bad of [{ max_overflows: -1 }, { max_overflows: 1.5 }, { min_sqnr_db: 1001 }, { min_sqnr_db: '60' }]) {
      const r = await putP({ rules: bad });
      expect(r.status, JSON.stringify(bad)).toBe(400);
      expect(r.body.error.details.length).toBeGreaterThan(0);
    }
    // The CLI's floor carries them (simulate gates on them).
    const now = await t.http().get(`/api/projects/${p.slug}/rules`).set('Cookie', cookieFor(t.ctx, l));
    expect(now.body.rules).toEqual({ max_overflows: 0, min_sqnr_db: 72.5 });
  });

  it('does not let a viewer change them', async () => {
    const res = await put({ min_utilization: 0.1 }, viewer);
    expect(res.status).toBe(403);
    const now = await t.http().get(`/api/projects/${project.slug}/rules`).set('Cookie', cookieFor(t.ctx, viewer));
    expect(now.body.rules.min_utilization).toBeUndefined();
  });
});
