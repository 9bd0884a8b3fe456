// Who may see and change a project.
import type { User } from '../../db/models';
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Only an admin creates projects. */
export const canCreateProject = (user: User): boolean => user.isAdmin;

/** Every member (and an admin) may see the project. */
export const canSeeProject = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');

/** A lead (or an admin) changes the project's settings: name, base branch, regression tolerance. */
export const canEditProject = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** Only an admin deletes a project (with its runs). */
export const canDeleteProject = (user: User): boolean => user.isAdmin;
