// The development mail viewer reads what the fake SMTP server wrote to its folder.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startFakeSmtp, type FakeSmtp } from '../../mail/fakeSmtp';
import { startTestServer, type TestServer } from '../../test/server';

let t: TestServer;
let smtp: FakeSmtp;
const dir = mkdtempSync(join(tmpdir(), 'pleat-mail-'));

beforeAll(async () => {
  t = await startTestServer({ config: { env: 'development', devMailDir: dir } });
  smtp = await startFakeSmtp({ dir });
});
afterAll(async () => {
  await smtp?.close();
  await t?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('GET /api/dev/mail (development only)', () => {
  it('lists the .eml files the fake SMTP server wrote and serves one as text', async () => {
    const transport = nodemailer.createTransport({ host: '127.0.0.1', port: smtp.port, secure: false, ignoreTLS: true });
    await transport.sendMail({ from: 'pleat@localhost', to: 'lead@example.test', subject: 'Hello from the test', text: 'body line' });
    transport.close();
    const list = await t.http().get('/api/dev/mail');
    expect(list.status).toBe(200);
    expect(list.body.mail).toHaveLength(1);
    expect(list.body.mail[0]).toMatchObject({ to: 'lead@example.test', subject: 'Hello from the test' });
    const one = await t.http().get(`/api/dev/mail/${list.body.mail[0].file}`);
    expect(one.text).toContain('body line');
    expect((await t.http().get('/api/dev/mail/..%2F..%2Fetc%2Fpasswd')).status).toBe(404);
  });
});
