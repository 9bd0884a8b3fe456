// The upload client against a stub HTTP server (node:http): which answers are retried, how
// often, how long it waits (fake sleep, nothing timed), and what one failure line says.
// Retrying 429 and 5xx but not other 4xx follows RFC 9110 (status classes) and RFC 6585 (429,
// Retry-After); exponential backoff with jitter is common practice, no source.
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { backoffDelay, endpoint, fetchTeamRules, policyFromEnv, uploadReport, type RetryPolicy } from './client';

type Handler = (req: IncomingMessage, res: ServerResponse, body: string) => void;
let server: Server;
let base: string;
let handler: Handler;
let seen: { method: string; url: string; auth: string | undefined; body: string }[];

beforeAll(async () => {
  server = createServer((req, res) => {
    let body = '';
    req.on('data', (c) => (body += c));
    req.on('end', () => {
      seen.push({ method: req.method!, url: req.url!, auth: req.headers.authorization, body });
      handler(req, res, body);
    });
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(() => new Promise<void>((r) => server.close(() => r())));
beforeEach(() => {
  seen = [];
});

const json = (res: ServerResponse, status: number, body: unknown, headers: Record<string, string> = {}) => {
  res.writeHead(status, { 'Content-Type': 'application/json', ...headers });
  res.end(JSON.stringify(body));
};
const policy: RetryPolicy = { tries: 4, baseDelayMs: 100, maxDelayMs: 1000, timeoutMs: 5000 };
const TOKEN = 'pleat_ci_abcdefghijklmnopqrstuvwxyz0123456789ABCDEFG';
const waits: number[] = [];
const hooks = { sleep: async (ms: number) => void waits.push(ms), random: () => 0.5 };
beforeEach(() => void waits.splice(0));

describe('uploadReport', () => {
  it('posts the report with the token to the project route and returns the answer', async () => {
    handler = (_q, res) => json(res, 201, { created: true, run: { id: 3 } });
    const out = await uploadReport({ url: `${base}/`, project: 'sensor front', token: TOKEN }, '{"a":1}', policy, hooks);
    expect(out).toMatchObject({ ok: true, status: 201, tries: 1 });
    expect(seen).toEqual([{ method: 'POST', url: '/api/projects/sensor%20front/runs', auth: `Bearer ${TOKEN}`, body: '{"a":1}' }]);
  });

  it.each([429, 500, 502, 503])('retries HTTP %i until the tries run out, with doubling waits', async (status) => {
    handler = (_q, res) => json(res, status, { error: { code: 'busy', message: 'Try later.' } });
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', policy, hooks);
    expect(seen.length).toBe(4);
    expect(out).toMatchObject({ ok: false, status, retryable: true, tries: 4, message: `HTTP ${status} busy: Try later.` });
    // random() = 0.5 puts each wait at 3/4 of base x 2^(n-1).
    expect(waits).toEqual([75, 150, 300]);
  });

  it.each([400, 401, 403, 404, 413])('does not retry HTTP %i', async (status) => {
    handler = (_q, res) => json(res, status, { error: { code: 'nope', message: 'Refused.' } });
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', policy, hooks);
    expect(seen.length).toBe(1);
    expect(out).toMatchObject({ ok: false, status, retryable: false, tries: 1, message: `HTTP ${status} nope: Refused.` });
    expect(waits).toEqual([]);
  });

  it('succeeds on a later try after a server error', async () => {
    let n = 0;
    handler = (_q, res) => (n++ === 0 ? json(res, 503, { error: { code: 'x', message: 'down' } }) : json(res, 200, { created: false }));
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', policy, hooks);
    expect(out).toMatchObject({ ok: true, status: 200, tries: 2 });
  });

  it('waits at least what Retry-After asks, up to the longest wait', async () => {
    handler = (_q, res) => json(res, 429, { error: { code: 'rate-limited', message: 'Slow down.' } }, { 'Retry-After': '0.5' });
    await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', { ...policy, tries: 2 }, hooks);
    expect(waits).toEqual([500]);
    handler = (_q, res) => json(res, 429, { error: { code: 'rate-limited', message: 'Slow down.' } }, { 'Retry-After': '3600' });
    waits.splice(0);
    await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', { ...policy, tries: 2 }, hooks);
    expect(waits).toEqual([1000]);
  });

  it('retries when nothing listens, and says so in one line', async () => {
    const closed = createServer();
    await new Promise<void>((r) => closed.listen(0, '127.0.0.1', r));
    const port = (closed.address() as AddressInfo).port;
    await new Promise<void>((r) => closed.close(() => r()));
    const out = await uploadReport({ url: `http://127.0.0.1:${port}`, project: 'p', token: TOKEN }, '{}', { ...policy, tries: 3 }, hooks);
    expect(out).toMatchObject({ ok: false, status: null, retryable: true, tries: 3 });
    expect(out.ok ? '' : out.message).toBe(`cannot reach http://127.0.0.1:${port}: connection refused (ECONNREFUSED)`);
  });

  it('does not follow a redirect (the token goes only where server.url says)', async () => {
    handler = (_q, res) => {
      res.writeHead(301, { Location: 'https://elsewhere.example/api' });
      res.end();
    };
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', policy, hooks);
    expect(seen.length).toBe(1);
    expect(out).toMatchObject({ ok: false, status: 301, retryable: false });
    expect(out.ok ? '' : out.message).toMatch(/redirects to https:\/\/elsewhere\.example\/api/);
  });

  it('reports an answer that is not from a Pleat server without its body', async () => {
    handler = (_q, res) => {
      res.writeHead(502, { 'Content-Type': 'text/html' });
      res.end('<html>bad gateway</html>');
    };
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', { ...policy, tries: 1 }, hooks);
    expect(out.ok ? '' : out.message).toBe('HTTP 502 Bad Gateway (the answer is not JSON)');
  });

  it('never puts the token into a message', async () => {
    handler = (_q, res) => json(res, 401, { error: { code: 'invalid-credentials', message: 'Unknown or revoked token.' } });
    const out = await uploadReport({ url: base, project: 'p', token: TOKEN }, '{}', policy, hooks);
    expect(JSON.stringify(out)).not.toContain(TOKEN);
  });
});

describe('fetchTeamRules', () => {
  it('reads the rules route with the token', async () => {
    handler = (_q, res) => json(res, 200, { rules: { min_utilization: 0.6 } });
    const out = await fetchTeamRules({ url: base, project: 'demo', token: TOKEN }, policy, hooks);
    expect(out).toMatchObject({ ok: true, body: { rules: { min_utilization: 0.6 } } });
    expect(seen[0]).toMatchObject({ method: 'GET', url: '/api/projects/demo/rules', auth: `Bearer ${TOKEN}` });
  });
});

describe('policy and helpers', () => {
  it('takes tries, backoff and timeout from the environment and refuses nonsense', () => {
    expect(policyFromEnv({ PLEAT_UPLOAD_TRIES: '2', PLEAT_UPLOAD_BACKOFF_MS: '10', PLEAT_UPLOAD_TIMEOUT_MS: '2000' }).policy).toMatchObject({ tries: 2, baseDelayMs: 10, timeoutMs: 2000 });
    expect(policyFromEnv({}).policy).toMatchObject({ tries: 4, baseDelayMs: 1000 });
    expect(policyFromEnv({ PLEAT_UPLOAD_TRIES: '0' }).problems).toEqual(['PLEAT_UPLOAD_TRIES must be an integer from 1 to 20']);
    expect(policyFromEnv({ PLEAT_UPLOAD_BACKOFF_MS: 'soon' }).problems.length).toBe(1);
  });

  it('keeps each wait between half and all of base x 2^(n-1), capped', () => {
    const p = { tries: 9, baseDelayMs: 1000, maxDelayMs: 5000, timeoutMs: 1 };
    expect([1, 2, 3].map((n) => backoffDelay(n, p, () => 0))).toEqual([500, 1000, 2000]);
    expect([1, 2, 3].map((n) => backoffDelay(n, p, () => 1))).toEqual([1000, 2000, 4000]);
    expect(backoffDelay(8, p, () => 1)).toBe(5000);
  });

  it('keeps a path prefix of the server address', () => {
    expect(endpoint('https://ci.example/pleat', 'api/projects/x/runs')).toBe('https://ci.example/pleat/api/projects/x/runs');
    expect(endpoint('https://ci.example/pleat/', 'api/projects/x/runs')).toBe('https://ci.example/pleat/api/projects/x/runs');
  });
});
