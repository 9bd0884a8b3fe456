// Watching a branch means e-mail when it breaks or regresses.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Engineers, leads and admins watch branches; viewers only read. */
export const canWatch = (role: ProjectRole): boolean => isAtLeast(role, 'engineer');
