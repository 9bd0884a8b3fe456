// The demo that `npm start` seeds (server/seed/seed.ts): its accounts, password and project are
// what the browser tests sign in with.
import { DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_PROJECT } from '../../server/seed/seed';

export type DemoRole = 'admin' | 'lead' | 'engineer' | 'viewer';

export function demoAccount(role: DemoRole): { email: string; name: string; password: string } {
  const a = DEMO_ACCOUNTS.find((x) => x.role === role);
  if (!a) throw new Error(`the demo seed has no ${role} account`);
  return { email: a.email, name: a.name, password: DEMO_PASSWORD };
}

export const demoProject = DEMO_PROJECT;
