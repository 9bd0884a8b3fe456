// The pull-request feedback of an upload, against a local fake of the hosts' REST endpoints
// (server/test/fakeGitHost.ts, after the GitHub and GitLab REST references): one commit status
// per run, one summary comment edited on every push, and a host that fails or is down never
// fails the upload but shows on the project.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HostKind } from '../../../shared/report/api';
import { cookieFor, designEntry, makeCiToken, makeMember, makeProject, makeReport } from '../../test/factories';
import { startFakeGitHost, type FakeGitHost } from '../../test/fakeGitHost';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';
import { COMMENT_MARKER } from './summary';
import { randomBytes } from 'node:crypto';
import { sealToken } from './secret';
import { saveConnection } from './store';

let t: TestServer;
beforeAll(async () => { t = await startTestServer(); });
afterAll(async () => t?.close());

const CASES: { kind: HostKind; repository: string; failed: string }[] = [
  { kind: 'github', repository: 'acme/sensor-frontend', failed: 'failure' },
  { kind: 'gitlab', repository: 'acme/dsp/sensor-frontend', failed: 'failed' },
];

describe.each(CASES)('pull-request feedback on $kind', ({ kind, repository, failed }) => {
  let host: FakeGitHost;
  let project: Project;
  let lead: User;
  let ci: string;

  beforeAll(async () => {
    host = await startFakeGitHost();
    project = await makeProject(t.ctx);
    lead = await makeMember(t.ctx, project, 'lead');
    ci = (await makeCiToken(t.ctx, project)).secret;
    const res = await t.http().put(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead))
      .send({ kind, apiUrl: kind === 'github' ? host.githubUrl : host.gitlabUrl, repository, token: host.token });
    expect(res.status).toBe(200);
    host.openRequest(repository, 'feature/trim', 7);
  });
  afterAll(async () => host?.stop());

  async function upload(branch: string, designs = [designEntry('anti-alias', { utilization: 0.8, registers: 4 })]) {
    const res = await t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${ci}`)
      .send(makeReport({ branch, baseBranch: 'main', designs }));
    expect(res.status).toBe(201);
    await t.ctx.mail.settled(); // the feedback runs after the response; wait for it to finish
    return res.body as { run: { id: number; commit: string; createdAt: string } };
  }
  const projectHost = async () => (await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead))).body.project.host;

  it('posts nothing for a branch without an open request', async () => {
    await upload('main');
    expect(host.statuses).toEqual([]);
    expect(host.comments).toEqual([]);
    expect((await projectHost()).lastOkAt).toEqual(expect.any(String));
  });

  it('posts a failing status and one summary comment naming the design, the rule and the change against the base', async () => {
    const { run } = await upload('feature/trim', [designEntry('anti-alias', { status: 'fail', utilization: 0.5, registers: 6 })]);
    expect(host.statuses).toHaveLength(1);
    expect(host.statuses[0]).toMatchObject({ sha: run.commit, state: failed, context: 'pleat', targetUrl: `http://pleat.test/projects/${project.slug}/runs/${run.id}` });
    expect(host.statuses[0]!.description.length).toBeLessThanOrEqual(140);
    expect(host.comments).toHaveLength(1);
    const body = host.comments[0]!.body;
    expect(body).toContain(COMMENT_MARKER);
    expect(body).toContain('gate broken');
    expect(body).toContain('`anti-alias`');
    expect(body).toContain('`min_utilization`');
    expect(body).toMatch(/Against `main`/);
    expect(body).toContain('utilization 80.0% to 50.0%');
    expect(body).toContain('registers 4 to 6');
    expect(body).toContain(`/runs/${run.id}`);
  });

  it('edits the same comment on the next push instead of adding one', async () => {
    const { run } = await upload('feature/trim');
    expect(host.statuses.map((s) => s.state)).toEqual([failed, 'success']);
    expect(host.comments).toHaveLength(1);
    expect(host.comments[0]!.edits).toBe(1);
    expect(host.comments[0]!.body).toContain('gate holds');
    expect(host.comments[0]!.body).toContain(`/runs/${run.id}`);
  });

  it('finds its comment by the hidden marker when the kept id is gone', async () => {
    await t.ctx.db.sequelize.query('DELETE FROM host_comments WHERE project_id = $1', { bind: [project.id] });
    await upload('feature/trim');
    expect(host.comments).toHaveLength(1);
    expect(host.comments[0]!.edits).toBe(2);
  });

  it('two pushes of a branch at once still make one comment on its request', async () => {
    host.openRequest(repository, 'feature/pair', 8);
    const runs = (await Promise.all([upload('feature/pair'), upload('feature/pair')])).map((r) => r.run);
    const mine = host.comments.filter((c) => c.number === 8);
    expect(mine).toHaveLength(1);
    // Whichever finished last, the comment shows the newer run: an older one never overwrites it.
    const newer = [...runs].sort((x, y) => Date.parse(x.createdAt) - Date.parse(y.createdAt) || x.id - y.id)[1]!;
    expect(mine[0]!.body).toContain(`/runs/${newer.id})`);
  });

  it('a host answering 500 leaves the upload at 201 and shows the failure on the project', async () => {
    host.setMode('fail');
    await upload('feature/trim');
    host.setMode('ok');
    const h = await projectHost();
    expect(h.lastError).toMatch(/finding the open request of feature\/trim: 500/);
    expect(Date.parse(h.lastErrorAt)).toBeGreaterThan(Date.parse(h.lastOkAt));
    expect(t.logs.some((l) => l.includes('host feedback of run'))).toBe(true);
  });

  it('a host that is down leaves the upload at 201 and says it could not be reached', async () => {
    await host.stop();
    await upload('feature/trim');
    const h = await projectHost();
    expect(h.lastError).toMatch(/ECONNREFUSED/);
    expect(host.comments.filter((c) => c.number === 7)).toHaveLength(1);
  });
});

describe('a token that does not open', () => {
  it('is recorded on the project (sealed under another key), and the upload is stored all the same', async () => {
    const project = await makeProject(t.ctx);
    const lead = await makeMember(t.ctx, project, 'lead');
    const ci = (await makeCiToken(t.ctx, project)).secret;
    await saveConnection(t.ctx, {
      projectId: project.id, kind: 'gitlab', apiUrl: 'http://127.0.0.1:9/api/v4', repository: 'g/p', userId: lead.id,
      sealed: sealToken(randomBytes(32), project.id, 'a-token-under-an-old-key'), last4: '-key',
    });
    const res = await t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${ci}`).send(makeReport({ branch: 'feature/x' }));
    expect(res.status).toBe(201);
    await t.ctx.mail.settled();
    const p = await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead));
    expect(p.body.project.host.lastError).toMatch(/^GitLab: the stored token does not open with this server's PLEAT_SECRET_KEY/);
  });
});

describe('a server without PLEAT_SECRET_KEY', () => {
  it('refuses to connect a host, saying what is missing', async () => {
    const bare = await startTestServer({ config: { secretKey: null } });
    try {
      const project = await makeProject(bare.ctx);
      const lead = await makeMember(bare.ctx, project, 'lead');
      const res = await bare.http().put(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(bare.ctx, lead))
        .send({ kind: 'github', repository: 'acme/x', token: 'a-token-12345678' });
      expect(res.status).toBe(503);
      expect(res.body.error).toMatchObject({ code: 'no-secret-key', message: expect.stringContaining('PLEAT_SECRET_KEY') });
    } finally {
      await bare.close();
    }
  });
});

