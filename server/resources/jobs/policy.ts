// Plan and sweep jobs: engineers and above start and cancel them; every member sees them.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Engineers, leads and admins start plans and sweeps (they cost a worker's time). */
export const canStartJob = (role: ProjectRole): boolean => isAtLeast(role, 'engineer');

/** Whoever may start a job may cancel one, also a job someone else started. */
export const canCancelJob = (role: ProjectRole): boolean => isAtLeast(role, 'engineer');

/** Every member, viewers too, sees the project's jobs, their progress and results. CI tokens do not. */
export const canReadJobs = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');
