// The git-host API addresses the server may call with a stored token (SSRF): https to public
// hosts only, http to the loopback only under PLEAT_HOST_HTTP_LOOPBACK=1, private ranges only
// through PLEAT_HOST_ALLOW. The ranges are those of RFC 1918 (private), RFC 3927 (IPv4
// link-local, where cloud metadata lives at 169.254.169.254), RFC 6598 (shared), RFC 4193 and
// RFC 4291 (IPv6 unique-local, link-local, loopback), from memory. Names resolve through an
// injected resolver; the only sockets opened are to a server of the test's own on 127.0.0.1.
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { Agent, fetch } from 'undici';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cookieFor, makeMember, makeProject } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import { hostLookup, refuseHostAddress, type HostAddressPolicy, type Resolve } from './address';

const strict: HostAddressPolicy = { httpLoopback: false, allow: [] };
const names: Record<string, string[]> = {
  'git.example.com': ['203.0.113.10'],
  'internal.example.com': ['10.0.0.5'],
  'metadata.example.com': ['169.254.169.254'],
  'mixed.example.com': ['203.0.113.11', '192.168.1.7'],
  'mapped.example.com': ['::ffff:172.16.0.1'],
  'v6local.example.com': ['fd12:3456::1'],
};
const resolve: Resolve = async (host) => {
  const a = names[host];
  if (!a) throw new Error('ENOTFOUND');
  return a;
};
const refuse = (url: string, policy = strict, unresolved: 'accept' | 'refuse' = 'refuse') => refuseHostAddress(url, policy, unresolved, resolve);

describe('which API addresses the server calls', () => {
  it('takes https to a public host', async () => {
    expect(await refuse('https://git.example.com/api/v3')).toBeNull();
    expect(await refuse('https://203.0.113.20/api/v4')).toBeNull();
  });

  it('refuses http, and a user name in the address', async () => {
    expect(await refuse('http://git.example.com/api/v3')).toMatch(/must be https:\/\//);
    expect(await refuse('https://me:pw@git.example.com/')).toMatch(/user name or password/);
  });

  it('refuses private, link-local (metadata), loopback and unique-local addresses, after resolving the name', async () => {
    for (const url of ['https://internal.example.com/api', 'https://metadata.example.com/', 'https://mixed.example.com/', 'https://mapped.example.com/', 'https://v6local.example.com/', 'https://169.254.169.254/latest', 'https://127.0.0.1/', 'https://[::1]/', 'https://100.64.1.1/', 'https://0.0.0.0/']) {
      expect(await refuse(url), url).toMatch(/private, loopback, link-local or reserved address; .* PLEAT_HOST_ALLOW/);
    }
  });

  it('lets PLEAT_HOST_ALLOW name a host or a range', async () => {
    expect(await refuse('https://internal.example.com/api', { httpLoopback: false, allow: ['internal.example.com'] })).toBeNull();
    expect(await refuse('https://internal.example.com/api', { httpLoopback: false, allow: ['10.0.0.0/8'] })).toBeNull();
    expect(await refuse('https://mixed.example.com/', { httpLoopback: false, allow: ['10.0.0.0/8'] })).toMatch(/192\.168\.1\.7/);
    // The allow-list never allows http.
    expect(await refuse('http://internal.example.com/api', { httpLoopback: false, allow: ['internal.example.com'] })).toMatch(/https/);
  });

  it('takes http to the loopback only under PLEAT_HOST_HTTP_LOOPBACK', async () => {
    expect(await refuse('http://127.0.0.1:4000/github')).toMatch(/must be https/);
    expect(await refuse('http://127.0.0.1:4000/github', { httpLoopback: true, allow: [] })).toBeNull();
    expect(await refuse('http://internal.example.com/', { httpLoopback: true, allow: [] })).toMatch(/must be https/);
  });

  it('a name that does not resolve: accepted on saving, refused before a call', async () => {
    expect(await refuse('https://nowhere.example.com/', strict, 'accept')).toBeNull();
    expect(await refuse('https://nowhere.example.com/', strict, 'refuse')).toMatch(/does not resolve/);
  });
});

describe('the connection itself is judged (DNS rebinding)', () => {
  let server: Server;
  let port = 0;
  let requests = 0;
  beforeAll(async () => {
    server = createServer((_req, res) => {
      requests++;
      res.end('{}');
    });
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    port = (server.address() as AddressInfo).port;
  });
  afterAll(() => new Promise<void>((r) => server.close(() => r())));

  /** undici's fetch through an agent whose connections resolve by hostLookup, as the host clients' do. */
  const call = (url: string, policy: HostAddressPolicy, resolver: Resolve) =>
    fetch(url, { dispatcher: new Agent({ connect: { lookup: hostLookup(new URL(url).protocol, policy, resolver) } }) });
  const reason = (err: unknown) => String((err as { cause?: Error }).cause?.message ?? err);

  it('refuses at the connection a name that resolved to a public address when checked and to the loopback after', async () => {
    // The attacker's name server answers a public address first and the loopback from then on.
    let asked = 0;
    const rebinding: Resolve = async () => (asked++ === 0 ? ['203.0.113.10'] : ['127.0.0.1']);
    const url = `https://rebind.example.com:${port}/api/v4/projects`;
    expect(await refuseHostAddress(url, strict, 'refuse', rebinding)).toBeNull();
    const before = requests;
    const err = await call(url, strict, rebinding).then(() => null, (e: unknown) => e);
    expect(reason(err)).toBe('The API host rebind.example.com is at 127.0.0.1, a private, loopback, link-local or reserved address; the server calls only public hosts unless an administrator allows this one in PLEAT_HOST_ALLOW (docs/server.md, Git hosts).');
    expect(requests).toBe(before);
  });

  it('connects where the policy allows the address it resolved to', async () => {
    const local: Resolve = async () => ['127.0.0.1'];
    const before = requests;
    const res = await call(`http://fake-host.test:${port}/api/v4`, { httpLoopback: true, allow: [] }, local);
    expect(res.status).toBe(200);
    expect(requests).toBe(before + 1);
    const refused = await call(`http://fake-host.test:${port}/api/v4`, strict, local).then(() => null, (e: unknown) => e);
    expect(reason(refused)).toMatch(/^The API address must be https:\/\//);
    expect(requests).toBe(before + 1);
  });
});

describe('PUT /api/projects/:slug/host refuses what the server may not call', () => {
  let t: TestServer;
  beforeAll(async () => {
    t = await startTestServer({ config: { hostAddress: { httpLoopback: false, allow: ['10.20.0.0/16'] } } });
  });
  afterAll(async () => t?.close());

  it('answers 400 with the reason; an allowed range is saved', async () => {
    const project = await makeProject(t.ctx);
    const lead = await makeMember(t.ctx, project, 'lead');
    const put = (apiUrl: string) => t.http().put(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead)).send({ kind: 'gitlab', apiUrl, repository: 'group/name', token: 'glpat-exampleToken1234' });
    const metadata = await put('https://169.254.169.254/latest/meta-data');
    expect(metadata.status).toBe(400);
    expect(metadata.body.error.message).toBe('The API host 169.254.169.254 is at 169.254.169.254, a private, loopback, link-local or reserved address; the server calls only public hosts unless an administrator allows this one in PLEAT_HOST_ALLOW (docs/server.md, Git hosts).');
    const loopback = await put('http://127.0.0.1:9/api/v4');
    expect(loopback.status).toBe(400);
    expect(loopback.body.error.message).toMatch(/^The API address must be https:\/\/ \(got http:\/\/127\.0\.0\.1:9\)/);
    expect((await put('https://192.168.0.10/api/v4')).status).toBe(400);
    // Nothing was stored by the refusals.
    expect((await t.http().get(`/api/projects/${project.slug}/host`).set('Cookie', cookieFor(t.ctx, lead))).body.host).toBeNull();
    const allowed = await put('https://10.20.3.4/api/v4');
    expect(allowed.status).toBe(200);
    expect(allowed.body.host.apiUrl).toBe('https://10.20.3.4/api/v4');
  });
});
