// Members and invitations of a project.
import type { Invitation } from '../../db/models';
import { isAtLeast, type ProjectRole } from '../../http/access';

/** A lead (or an admin) lists, adds, re-roles and removes members, and invites people by e-mail. */
export const canManageMembers = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** Whoever holds the link may accept an invitation once, before it expires. */
export function canAcceptInvitation(inv: Invitation, now = new Date()): 'ok' | 'used' | 'expired' {
  if (inv.acceptedAt) return 'used';
  if (inv.expiresAt.getTime() <= now.getTime()) return 'expired';
  return 'ok';
}
