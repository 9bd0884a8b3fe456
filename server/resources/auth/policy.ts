// Signing in and out is open to everyone; the session itself is checked by server/http/auth.ts.
import type { User } from '../../db/models';

/** A person may sign in when the account exists, has a password, and is not deactivated. */
export function canSignIn(user: User | null): user is User {
  return !!user && !!user.passwordHash && !user.deactivatedAt;
}
