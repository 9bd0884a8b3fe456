// Outgoing mail through an SMTP client (nodemailer). In development and tests the SMTP server is
// the local fake one (server/mail/fakeSmtp.ts). Mail is sent after the response has gone out and a
// failure is logged, never turned into a failed request.
import type { Response } from 'express';
import nodemailer, { type Transporter } from 'nodemailer';

export interface Message {
  to: string | string[];
  subject: string;
  text: string;
}

export interface Mailer {
  /** Queue a message; never throws. */
  send(message: Message): void;
  /** Run some work (e.g. deciding who to tell) and let settled() wait for it. */
  track(work: Promise<unknown>): void;
  /** Resolves when every queued message and tracked task has finished (tests, shutdown). */
  settled(): Promise<void>;
  close(): void;
}

export function createMailer(smtp: { host: string; port: number; from: string } | null, log: (msg: string) => void): Mailer {
  const transport: Transporter | null = smtp
    ? nodemailer.createTransport({ host: smtp.host, port: smtp.port, secure: false, ignoreTLS: true, connectionTimeout: 5_000, greetingTimeout: 5_000, socketTimeout: 10_000 })
    : null;
  const pending = new Set<Promise<unknown>>();
  const mailer: Mailer = {
    track(work) {
      const p = work.catch((err) => log(`mail: ${err instanceof Error ? err.message : String(err)}`)).finally(() => pending.delete(p));
      pending.add(p);
    },
    send(message) {
      if (!transport || !smtp) return;
      mailer.track(transport.sendMail({ from: smtp.from, ...message }));
    },
    async settled() {
      while (pending.size) await Promise.allSettled([...pending]);
    },
    close() {
      transport?.close();
    },
  };
  return mailer;
}

/** Runs the work once the response has been handed over, so mail never delays or fails it. */
export function afterResponse(res: Response, mailer: Mailer, work: () => Promise<unknown>): void {
  res.once('finish', () => mailer.track(Promise.resolve().then(work)));
}
