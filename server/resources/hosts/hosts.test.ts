// Connecting a project to its git host: who may, what is checked, and that the token is kept
// encrypted (AES-256-GCM, NIST SP 800-38D) and never sent back.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { randomBytes } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { cookieFor, makeMember, makeProject } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';
import { openToken, sealToken } from './secret';
import { repositoryWebUrl } from './store';

let t: TestServer;
let project: Project;
let lead: User;
let viewer: User;
const TOKEN = 'ghp_exampleTokenForTests9876';

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  lead = await makeMember(t.ctx, project, 'lead');
  viewer = await makeMember(t.ctx, project, 'viewer');
});
afterAll(async () => t?.close());

const put = (body: object, who = lead) => t.http().put(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, who)).send(body);

describe('git host connection', () => {
  it('a lead connects GitHub; the answer shows the token as set with its last 4 characters, never the token', async () => {
    const res = await put({ kind: 'github', repository: 'acme/radio-channelizer', token: TOKEN });
    expect(res.status).toBe(200);
    expect(res.body.host).toMatchObject({
      kind: 'github', apiUrl: 'https://api.github.com', repository: 'acme/radio-channelizer',
      token: { set: true, last4: '9876' }, updatedBy: { id: lead.id }, lastError: null,
    });
    expect(res.text).not.toContain(TOKEN);
    const again = await t.http().get(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead));
    expect(again.body.host.token).toEqual({ set: true, last4: '9876' });
    expect(again.text).not.toContain(TOKEN);
  });

  it('stores the token sealed: the row holds no plain token and opens only with the key, for this project', async () => {
    const [row] = await t.ctx.db.sequelize.query<{ token_sealed: string }>(
      'SELECT token_sealed FROM host_connections WHERE project_id = $1', { bind: [project.id], type: QueryTypes.SELECT },
    );
    expect(row!.token_sealed).not.toContain(TOKEN);
    expect(row!.token_sealed).not.toContain(Buffer.from(TOKEN).toString('base64'));
    const key = t.ctx.config.secretKey!;
    expect(openToken(key, project.id, row!.token_sealed)).toBe(TOKEN);
    expect(openToken(randomBytes(32), project.id, row!.token_sealed)).toBeNull();
    expect(openToken(key, project.id + 1, row!.token_sealed)).toBeNull();
    // GCM authenticates: one flipped bit of the ciphertext and it does not open (NIST SP 800-38D).
    const raw = Buffer.from(row!.token_sealed.slice(3), 'base64');
    raw[raw.length - 1]! ^= 1;
    expect(openToken(key, project.id, `v1:${raw.toString('base64')}`)).toBeNull();
    // A fresh nonce per seal: the same token seals differently every time.
    expect(sealToken(key, 1, TOKEN)).not.toBe(sealToken(key, 1, TOKEN));
  });

  it('keeps the stored token when a change leaves it out', async () => {
    const res = await put({ kind: 'github', apiUrl: 'https://github.example.com/api/v3/', repository: 'acme/other' });
    expect(res.status).toBe(200);
    expect(res.body.host).toMatchObject({ apiUrl: 'https://github.example.com/api/v3', repository: 'acme/other', token: { last4: '9876' } });
  });

  it('refuses a repository of the wrong shape, a bad address and a new connection without a token', async () => {
    expect((await put({ kind: 'github', repository: 'just-a-name', token: TOKEN })).body.error.message).toMatch(/owner\/name/);
    expect((await put({ kind: 'gitlab', repository: 'group/sub/name', apiUrl: 'ftp://x', token: TOKEN })).status).toBe(400);
    expect((await put({ kind: 'gitlab', repository: 'group/sub/name', token: 'has spaces in it' })).status).toBe(400);
    const other = await makeProject(t.ctx);
    const otherLead = await makeMember(t.ctx, other, 'lead');
    const res = await t.http().put(`/api/projects/${other.slug}/host`).set('Cookie', cookieFor(t.ctx, otherLead)).send({ kind: 'gitlab', repository: 'group/sub/name' });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/token/);
  });

  it('members see which host and its last error on the project; only a lead sees the settings', async () => {
    const p = await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, viewer));
    expect(p.body.project.host).toEqual({
      kind: 'github', repository: 'acme/other', webUrl: 'https://github.example.com/acme/other', lastOkAt: null, lastError: null, lastErrorAt: null,
    });
    expect((await t.http().get(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, viewer))).status).toBe(403);
    expect((await put({ kind: 'github', repository: 'acme/x', token: TOKEN }, viewer)).status).toBe(403);
  });

  it('a lead disconnects the host', async () => {
    const del = await t.http().delete(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead));
    expect(del.status).toBe(204);
    const p = await t.http().get(`/api/projects/${project.slug}`).set('Cookie', cookieFor(t.ctx, lead));
    expect(p.body.project.host).toBeNull();
    expect((await t.http().delete(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead))).status).toBe(404);
  });
});

describe('the repository web address', () => {
  it('follows from the API address of each host (GitHub: api.github.com and /api/v3; GitLab: /api/v4, from the hosts\' REST references)', () => {
    expect(repositoryWebUrl('github', 'https://api.github.com', 'acme/x')).toBe('https://github.com/acme/x');
    expect(repositoryWebUrl('github', 'https://ghe.example.com/api/v3', 'acme/x')).toBe('https://ghe.example.com/acme/x');
    expect(repositoryWebUrl('gitlab', 'https://gitlab.com/api/v4', 'g/sub/x')).toBe('https://gitlab.com/g/sub/x');
    expect(repositoryWebUrl('gitlab', 'https://git.example.com/gitlab/api/v4/', 'g/x')).toBe('https://git.example.com/gitlab/g/x');
    expect(repositoryWebUrl('gitlab', 'https://gitlab.com/api/v4', '12345')).toBeNull();
    expect(repositoryWebUrl('github', 'http://127.0.0.1:9/elsewhere', 'acme/x')).toBeNull();
  });
});
