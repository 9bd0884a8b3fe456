// A local SMTP server that accepts every message and keeps it: as .eml files in a folder
// (development: .data/mail/) and/or handed to a callback (tests). It relays nothing anywhere.
import { chmodSync, mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import { SMTPServer } from 'smtp-server';

export interface CaughtMail {
  from: string | null;
  to: string[];
  raw: string;
}

export interface FakeSmtp {
  port: number;
  messages: CaughtMail[];
  close(): Promise<void>;
}

export async function startFakeSmtp(opts: { port?: number; host?: string; dir?: string; onMessage?: (m: CaughtMail) => void } = {}): Promise<FakeSmtp> {
  // Mail holds invitation links (one-time credentials): the folder and files are the owner's only.
  if (opts.dir) {
    mkdirSync(opts.dir, { recursive: true, mode: 0o700 });
    chmodSync(opts.dir, 0o700);
  }
  const messages: CaughtMail[] = [];
  let seq = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    logger: false,
    closeTimeout: 1000,
    size: 25 * 1024 * 1024,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('error', callback);
      stream.on('end', () => {
        const mail: CaughtMail = {
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
          to: session.envelope.rcptTo.map((r) => r.address),
          raw: Buffer.concat(chunks).toString('utf8'),
        };
        messages.push(mail);
        if (opts.dir) {
          const stamp = new Date().toISOString().replace(/[:.]/g, '-');
          writeFileSync(join(opts.dir, `${stamp}-${process.pid}-${++seq}.eml`), mail.raw, { mode: 0o600 });
        }
        opts.onMessage?.(mail);
        callback();
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port ?? 0, opts.host ?? '127.0.0.1', () => resolve());
  });
  server.on('error', () => {});
  const port = (server.server.address() as AddressInfo).port;
  return { port, messages, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}
