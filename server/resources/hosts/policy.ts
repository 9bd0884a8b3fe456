// A project's connection to its git host (pull-request feedback).
import { isAtLeast, type ProjectRole } from '../../http/access';

/** A lead (or an admin) sees the connection's settings and sets, changes or removes it. */
export const canManageHost = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** Every member sees which host the project posts to and the last failure (on the project itself). */
export const canSeeHostStatus = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');
