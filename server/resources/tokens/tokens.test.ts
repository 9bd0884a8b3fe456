// CI tokens: shown once, stored hashed, revocable, and good for one project only.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { hashSecret } from '../../http/auth';
import { cookieFor, makeMember, makeProject, makeReport } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

let t: TestServer;
let project: Project;
let lead: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  lead = await makeMember(t.ctx, project, 'lead');
});
afterAll(async () => t?.close());

const asLead = () => ({ Cookie: cookieFor(t.ctx, lead) });

describe('CI tokens', () => {
  it('shows the secret once, stores only its sha256, and lists name and prefix', async () => {
    const created = await t.http().post(`/api/projects/${project.slug}/tokens`).set(asLead()).send({ name: 'main runner' });
    expect(created.status).toBe(201);
    const secret: string = created.body.secret;
    expect(secret).toMatch(/^pleat_ci_[A-Za-z0-9_-]{43}$/);
    expect(created.body.token).toMatchObject({ name: 'main runner', prefix: secret.slice(0, 15), revokedAt: null, createdBy: { id: lead.id } });
    const rows = await t.db.sequelize.query<{ token_hash: string }>('SELECT token_hash FROM ci_tokens WHERE id = $1', { bind: [created.body.token.id], type: QueryTypes.SELECT });
    expect(rows[0]!.token_hash).toBe(hashSecret(secret));
    expect(JSON.stringify(rows)).not.toContain(secret);

    const list = await t.http().get(`/api/projects/${project.slug}/tokens`).set(asLead());
    expect(list.status).toBe(200);
    expect(JSON.stringify(list.body)).not.toContain(secret);
    expect(JSON.stringify(list.body)).not.toContain(hashSecret(secret));
    expect(list.body.tokens.map((x: { name: string }) => x.name)).toContain('main runner');
  });

  it('uploads until revoked, records when it was last used, then is refused', async () => {
    const created = await t.http().post(`/api/projects/${project.slug}/tokens`).set(asLead()).send({ name: 'short-lived' });
    const secret = created.body.secret as string;
    const up = () => t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${secret}`).send(makeReport());
    expect((await up()).status).toBe(201);
    // last_used_at is written off the request's path; wait until it shows.
    await expect
      .poll(async () => {
        const list = await t.http().get(`/api/projects/${project.slug}/tokens`).set(asLead());
        return list.body.tokens.find((x: { id: number }) => x.id === created.body.token.id).lastUsedAt;
      }, { timeout: 5_000, interval: 20 })
      .toBeTruthy();
    const revoked = await t.http().delete(`/api/projects/${project.slug}/tokens/${created.body.token.id}`).set(asLead());
    expect(revoked.status).toBe(200);
    expect(revoked.body.token.revokedAt).not.toBeNull();
    const refused = await up();
    expect(refused.status).toBe(401);
    expect(refused.body.error.code).toBe('invalid-credentials');
  });

  it('cannot revoke another project\'s token through this project', async () => {
    const other = await makeProject(t.ctx);
    const otherLead = await makeMember(t.ctx, other, 'lead');
    const created = await t.http().post(`/api/projects/${other.slug}/tokens`).set('Cookie', cookieFor(t.ctx, otherLead)).send({ name: 'theirs' });
    const res = await t.http().delete(`/api/projects/${project.slug}/tokens/${created.body.token.id}`).set(asLead());
    expect(res.status).toBe(404);
  });
});
