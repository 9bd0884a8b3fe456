// Reading what the fake SMTP server received, parsed by mailparser (a general-purpose parser).
import { simpleParser } from 'mailparser';
import type { TestServer } from './server';

export interface ReceivedMail { to: string[]; subject: string; text: string }

/** Waits until the server has sent everything it queued, then parses what arrived since `from`. */
export async function receivedMail(t: TestServer, from = 0): Promise<ReceivedMail[]> {
  await t.ctx.mail.settled();
  const out: ReceivedMail[] = [];
  for (const m of t.smtp!.messages.slice(from)) {
    const parsed = await simpleParser(m.raw);
    out.push({ to: m.to, subject: parsed.subject ?? '', text: parsed.text ?? '' });
  }
  return out;
}
