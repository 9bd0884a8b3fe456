// Watching branches, and the mail a watcher gets when a new run breaks or regresses the branch.
// The SMTP side is a fake server on a random port; the mail is parsed with mailparser.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { cookieFor, designEntry, makeCiToken, makeMember, makeProject, makeReport, makeUser } from '../../test/factories';
import { receivedMail } from '../../test/mail';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

let t: TestServer;
let project: Project;
let token: string;
let engineer: User;

beforeAll(async () => {
  t = await startTestServer({ mail: true });
  project = await makeProject(t.ctx, { name: 'Sensor Front End', regressionTolerance: 0.05 });
  token = (await makeCiToken(t.ctx, project)).secret;
  engineer = await makeMember(t.ctx, project, 'engineer');
});
afterAll(async () => t?.close());

async function push(branch: string, design: Parameters<typeof designEntry>[1]) {
  const res = await t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${token}`)
    .send(makeReport({ branch, baseBranch: 'main', designs: [designEntry('notch', design)] }));
  expect(res.status).toBe(201);
  return res.body.run.id as number;
}

async function mailAfter(action: () => Promise<unknown>) {
  const from = t.smtp!.messages.length;
  await action();
  return receivedMail(t, from);
}

const watch = (who: User, branch: string) =>
  t.http().put(`/api/projects/${project.slug}/branches/${encodeURIComponent(branch)}/watch`).set('Cookie', cookieFor(t.ctx, who));

describe('watching', () => {
  it('lists, adds and removes the caller\'s watched branches (names with slashes too)', async () => {
    const u = await makeMember(t.ctx, project, 'engineer');
    expect((await watch(u, 'feature/fir')).status).toBe(201);
    expect((await watch(u, 'feature/fir')).status).toBe(200);
    const list = await t.http().get(`/api/projects/${project.slug}/watches`).set('Cookie', cookieFor(t.ctx, u));
    expect(list.body.branches).toEqual(['feature/fir']);
    await t.http().delete(`/api/projects/${project.slug}/branches/feature%2Ffir/watch`).set('Cookie', cookieFor(t.ctx, u)).expect(200);
    const after = await t.http().get(`/api/projects/${project.slug}/watches`).set('Cookie', cookieFor(t.ctx, u));
    expect(after.body.branches).toEqual([]);
  });
});

describe('mail to watchers', () => {
  it('is sent when a watched branch goes from pass to fail, once', async () => {
    await push('main', { utilization: 0.8, registers: 10 });
    await watch(engineer, 'feature/fail').expect(201);
    expect(await mailAfter(() => push('feature/fail', { utilization: 0.8, registers: 10 }))).toEqual([]);
    const mail = await mailAfter(() => push('feature/fail', { utilization: 0.8, registers: 10, status: 'fail' }));
    expect(mail).toHaveLength(1);
    expect(mail[0]!.to).toEqual([engineer.email]);
    expect(mail[0]!.subject).toBe('[Pleat] Sensor Front End: feature/fail now fails');
    expect(mail[0]!.text).toContain('went from pass to fail');
    expect(mail[0]!.text).toMatch(new RegExp(`http://pleat.test/projects/${project.slug}/runs/\\d+`));
    // Still failing on the next push: not news.
    expect(await mailAfter(() => push('feature/fail', { utilization: 0.8, registers: 10, status: 'fail' }))).toEqual([]);
  });

  it('is sent when utilization or the register minimum regresses against the base past the tolerance', async () => {
    await watch(engineer, 'feature/slow').expect(201);
    // Within the 5% tolerance (0.8 -> 0.78 is 2.5%): nothing.
    expect(await mailAfter(() => push('feature/slow', { utilization: 0.78, registers: 10 }))).toEqual([]);
    const util = await mailAfter(() => push('feature/slow', { utilization: 0.6, registers: 10 }));
    expect(util).toHaveLength(1);
    expect(util[0]!.subject).toBe('[Pleat] Sensor Front End: feature/slow regressed');
    expect(util[0]!.text).toContain('notch: utilization 80.0% -> 60.0% against main');
    // The same regression on the next push is not news; a new one (registers 10 -> 12, 20%) is.
    expect(await mailAfter(() => push('feature/slow', { utilization: 0.6, registers: 10 }))).toEqual([]);
    const regs = await mailAfter(() => push('feature/slow', { utilization: 0.6, registers: 12 }));
    expect(regs).toHaveLength(1);
    expect(regs[0]!.text).toContain('notch: register minimum 10 -> 12');
    expect(regs[0]!.text).not.toContain('utilization');
  });

  it('names the design, the rule, the values before and after, and links the run', async () => {
    await watch(engineer, 'feature/named').expect(201);
    await push('feature/named', { utilization: 0.8, registers: 10 });
    const mail = await mailAfter(() => push('feature/named', { utilization: 0.5, registers: 12, status: 'fail' }));
    expect(mail).toHaveLength(1);
    const text = mail[0]!.text;
    // The rule the design breaks, its value against the limit (designEntry's violation: 0.5 against 0.75).
    expect(text).toContain('notch breaks rule min_utilization (team): 0.5 against the limit 0.75 (hw/notch.fold.yaml)');
    // Its numbers in the branch's previous run, and now.
    expect(text).toContain('before: utilization 80.0%, register minimum 10, pass; now: utilization 50.0%, register minimum 12, fail');
    // The regressions against the base, with the tolerance they passed.
    expect(text).toContain('notch: utilization 80.0% -> 50.0% against main');
    expect(text).toContain('notch: register minimum 10 -> 12 against main');
    expect(text).toContain("past the project's regression tolerance of 5.0%");
    const [last] = await t.ctx.db.sequelize.query<{ id: number }>(
      "SELECT id FROM runs WHERE branch = 'feature/named' ORDER BY id DESC LIMIT 1", { type: QueryTypes.SELECT },
    );
    expect(text).toContain(`http://pleat.test/projects/${project.slug}/runs/${last!.id}`);
  });

  it('goes only to watchers of that branch who can still read the project', async () => {
    const other = await makeMember(t.ctx, project, 'engineer');
    const gone = await makeMember(t.ctx, project, 'engineer');
    const off = await makeMember(t.ctx, project, 'engineer');
    for (const u of [engineer, other, gone, off]) await watch(u, 'feature/many').expect(201);
    await watch(engineer, 'feature/unrelated').expect(201);
    await t.ctx.db.models.Membership.destroy({ where: { userId: gone.id } });
    await off.update({ deactivatedAt: new Date() });
    await push('feature/many', { utilization: 0.8, registers: 10 });
    const mail = await mailAfter(() => push('feature/many', { utilization: 0.8, registers: 10, status: 'fail' }));
    expect(mail.map((m) => m.to[0]).sort()).toEqual([engineer.email, other.email].sort());
  });

  it('never fails an upload when the mail server is down', async () => {
    const down = await startTestServer({ config: { smtp: { host: '127.0.0.1', port: 9, from: 'x@y' } } });
    try {
      const p = await makeProject(down.ctx);
      const u = await makeUser(down.ctx);
      await down.ctx.db.models.Membership.create({ projectId: p.id, userId: u.id, role: 'engineer' });
      await down.ctx.db.models.Watch.create({ projectId: p.id, userId: u.id, branch: 'main' });
      const secret = (await makeCiToken(down.ctx, p)).secret;
      const send = (status: 'pass' | 'fail') => down.http().post(`/api/projects/${p.slug}/runs`).set('Authorization', `Bearer ${secret}`)
        .send(makeReport({ designs: [designEntry('notch', { status })] }));
      expect((await send('pass')).status).toBe(201);
      expect((await send('fail')).status).toBe(201);
      await down.ctx.mail.settled();
      // The mail was attempted (and its failure logged), not skipped.
      expect(down.logs.some((l) => l.startsWith('mail: '))).toBe(true);
    } finally {
      await down.close();
    }
  });
});
