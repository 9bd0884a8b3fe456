// Trying a design in the browser runs the engine on the server: engineers and above.
import { isAtLeast, type ProjectRole } from '../../http/access';

/**
 * Without a project: an admin, or someone who is engineer or lead in at least one project.
 * With a project (its team rules apply): engineer or lead there, or an admin.
 */
export const canAnalyze = (roles: ProjectRole[]): boolean => roles.some((r) => isAtLeast(r, 'engineer'));
