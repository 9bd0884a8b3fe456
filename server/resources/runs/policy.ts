// Runs: every member reads them; only the project's own CI token adds them.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Members of every role (and admins) read branches, histories and runs. CI tokens only write. */
export const canReadRuns = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');

/** Runs are added by CI with the project's own token; people do not upload by hand. */
export const canUploadRun = (role: ProjectRole): boolean => role === 'ci';
