// Branches are part of the project's history: every member reads them.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Members of every role (and admins) see the branches with their verdicts and trends. */
export const canListBranches = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');
