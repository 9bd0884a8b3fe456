// Plan and sweep jobs: engineers and above start and cancel them; every member sees them.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Engineers, leads and admins start plans and sweeps (they cost a worker's time). */
export const canStartJob = (role: ProjectRole): boolean => isAtLeast(role, 'engineer');

/** Whoever may start a job may cancel one, also a job someone else started. */
export const canCancelJob = (role: ProjectRole): boolean => isAtLeast(role, 'engineer');

/** Every member, viewers too, sees the project's jobs, their progress and results. CI tokens do not. */
export const canReadJobs = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');

/**
 * A person has at most this many jobs queued or running at once, over all projects: workers are
 * shared, and one person's batch should not keep everyone else's plans waiting. The next start
 * is refused (429) until one of them ends or is cancelled.
 */
export const MAX_ACTIVE_JOBS_PER_PERSON = 4;
