// Secrets and names: the seeded CI token and invitation links never reach the log, mail files
// are readable by their owner only, passwords of spaces and branch names that display as
// something else are refused with a message that says why.
import { mkdtempSync, readFileSync, readdirSync, rmSync, statSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hashSecret } from '../http/auth';
import { startFakeSmtp } from '../mail/fakeSmtp';
import { createMailer } from '../mail/mailer';
import { seedDemo } from '../seed/seed';
import { cookieFor, makeInvitation, makeMember, makeProject, makeUser } from '../test/factories';
import { startTestServer, type TestServer } from '../test/server';

let t: TestServer;
let root: string;

beforeAll(async () => {
  t = await startTestServer({ mail: true });
  // A root of the test's own, so that the seed's token file does not land in the checkout.
  root = mkdtempSync(join(tmpdir(), 'pleat-secrets-'));
  symlinkSync(resolve('examples'), join(root, 'examples'));
  t.ctx.config.root = root;
});
afterAll(async () => {
  await t?.close();
  rmSync(root, { recursive: true, force: true });
});

const mode = (file: string) => statSync(file).mode & 0o777;

describe('secrets stay out of logs and other people\'s reach', () => {
  it('the seeded CI token goes to a file of mode 0600, not to the log', async () => {
    const logged: string[] = [];
    const { ciToken } = await seedDemo(t.ctx, (m) => logged.push(m));
    expect(ciToken).toMatch(/^pleat_ci_/);
    expect(logged.join('\n')).not.toContain(ciToken!);
    const file = join(root, '.data', 'demo-ci-token');
    expect(logged.join('\n')).toContain(file);
    expect(readFileSync(file, 'utf8').trim()).toBe(ciToken);
    expect(mode(file)).toBe(0o600);
    // The file holds the token the database knows.
    expect(await t.ctx.db.models.CiToken.count({ where: { tokenHash: hashSecret(ciToken!) } })).toBe(1);
  });

  it('an invitation link is not logged, also when the request fails or the mail cannot be sent', async () => {
    const project = await makeProject(t.ctx);
    const { secret } = await makeInvitation(t.ctx, project, { email: 'someone@example.test' });
    // A 500 on the invitation route logs the URL with the secret replaced.
    const { describeError, errorHandler } = await import('../http/errors');
    const lines: string[] = [];
    errorHandler((m) => lines.push(m))(new Error('boom'), { method: 'POST', originalUrl: `/api/invitations/${secret}/accept` } as never,
      { headersSent: true } as never, () => {});
    expect(lines.join('\n')).toContain('/api/invitations/<secret>/accept');
    expect(lines.join('\n')).not.toContain(secret);
    expect(describeError(new Error('x')).split('\n')[0]).toBe('Error: x');
    // A mail server that refuses: the failure is logged, the link in the message is not.
    const mailLogs: string[] = [];
    const broken = createMailer({ host: '127.0.0.1', port: 1, from: 'p@localhost' }, (m) => mailLogs.push(m));
    broken.send({ to: 'someone@example.test', subject: 's', text: `link http://pleat.test/invitations/${secret}` });
    await broken.settled();
    broken.close();
    expect(mailLogs).toHaveLength(1);
    expect(mailLogs[0]).not.toContain(secret);
    expect(t.logs.join('\n')).not.toContain(secret);
  });

  it('mail files and their folder are readable by their owner only', async () => {
    const dir = join(root, 'mail');
    const smtp = await startFakeSmtp({ dir });
    const mailer = createMailer({ host: '127.0.0.1', port: smtp.port, from: 'p@localhost' }, () => {});
    mailer.send({ to: 'a@example.test', subject: 'invitation', text: 'a one-time link' });
    await mailer.settled();
    mailer.close();
    await smtp.close();
    const files = readdirSync(dir);
    expect(files).toHaveLength(1);
    expect(mode(dir)).toBe(0o700);
    expect(mode(join(dir, files[0]!))).toBe(0o600);
  });
});

describe('names and passwords', () => {
  it('refuses a password of only spaces, for a new account and on accepting an invitation', async () => {
    const admin = await makeUser(t.ctx, { isAdmin: true });
    const res = await t.http().post('/api/users').set('Cookie', cookieFor(t.ctx, admin)).send({ email: 'spaces@example.test', password: '          ' });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toBe('The request body is not valid: /password must contain something other than spaces.');
    const { secret } = await makeInvitation(t.ctx, null, { email: 'spaces2@example.test' });
    const acc = await t.http().post(`/api/invitations/${secret}/accept`).send({ name: 'S', password: ' \t        ' });
    expect(acc.status).toBe(400);
    expect(acc.body.error.message).toMatch(/password must contain something other than spaces/);
  });

  it('refuses branch names with control, bidirectional-override or zero-width characters, and says which', async () => {
    const project = await makeProject(t.ctx);
    const lead = await makeMember(t.ctx, project, 'lead');
    const asLead = { Cookie: cookieFor(t.ctx, lead) };
    for (const name of ['main\u202egnp.', 'rel\u200bease', 'x\u001b[31m', 'a\u2066b', 'main\ufeff']) {
      const base = await t.http().patch(`/api/projects/${project.slug}`).set(asLead).send({ baseBranch: name });
      expect(base.status, JSON.stringify(name)).toBe(400);
      expect(base.body.error.message).toMatch(/baseBranch must be 1 to 255 characters without whitespace, control, bidirectional-override or zero-width characters/);
      const watch = await t.http().put(`/api/projects/${project.slug}/branches/${encodeURIComponent(name)}/watch`).set(asLead);
      expect(watch.status).toBe(400);
      expect(watch.body.error.message).toMatch(/^Not a branch name: a branch name must be .* found U\+[0-9A-F]{4} at character \d+\.$/);
    }
    expect((await t.http().put(`/api/projects/${project.slug}/branches/${encodeURIComponent('feature/fir-ü')}/watch`).set(asLead)).status).toBe(201);
  });
});
