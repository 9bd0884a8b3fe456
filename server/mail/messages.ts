// The words of Pleat's e-mail. Plain text: it reads the same in every mail client.
import type { Message } from './mailer';

export function invitationMessage(o: {
  to: string; inviter: string | null; projectName: string | null; role: string | null; link: string; expiresAt: Date;
}): Message {
  const what = o.projectName ? `the project "${o.projectName}" as ${o.role}` : 'Pleat';
  return {
    to: o.to,
    subject: o.projectName ? `You are invited to ${o.projectName} on Pleat` : 'You are invited to Pleat',
    text: [
      `${o.inviter ?? 'An administrator'} invited you to ${what}.`,
      '',
      'Open this link to choose your name and password (it works once):',
      o.link,
      '',
      `The link expires on ${o.expiresAt.toISOString().slice(0, 16).replace('T', ' ')} UTC.`,
      'If you did not expect this, ignore this message.',
    ].join('\n'),
  };
}

export function branchAlertMessage(o: {
  to: string; projectName: string; branch: string; commit: string; reasons: string[]; broken?: string[]; link: string;
}): Message {
  const broken = o.broken ?? [];
  return {
    to: o.to,
    subject: `[Pleat] ${o.projectName}: ${o.branch} ${o.reasons.length === 1 && o.reasons[0]!.startsWith('went from pass') ? 'now fails' : 'regressed'}`,
    text: [
      `A new run on branch ${o.branch} of ${o.projectName} (commit ${o.commit.slice(0, 12)}):`,
      '',
      ...o.reasons.map((r) => `- ${r}`),
      ...(broken.length ? ['', 'Designs that do not pass:', ...broken.map((b) => `- ${b}`)] : []),
      '',
      `The run: ${o.link}`,
      '',
      'You get this because you watch this branch; unwatch it on the branch page.',
    ].join('\n'),
  };
}
