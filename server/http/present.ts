// How rows leave the server: only the fields a client may see (never hashes).
import type { PublicUser } from '../../shared/report/api';
import type { User } from '../db/models';

export type { PublicUser };

export function publicUser(u: User): PublicUser {
  return { id: u.id, email: u.email, name: u.name, isAdmin: u.isAdmin, active: !u.deactivatedAt };
}

/** Lower-cased, trimmed e-mail: addresses are compared without case. */
export function normalEmail(email: string): string {
  return email.trim().toLowerCase();
}
