// Accounts are an admin's business.
import type { User } from '../../db/models';

/** Only an admin lists, creates, invites and deactivates accounts. */
export const canManageUsers = (actor: User): boolean => actor.isAdmin;

/** An admin cannot deactivate or demote themselves: the last admin would lock everyone out. */
export const canChangeOwnAccess = (actor: User, target: User): boolean => actor.id !== target.id;
