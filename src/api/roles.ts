// What the signed-in person may do, so pages offer only that. The server checks every request
// again (server/resources/*/policy.ts); these mirror its policies, they do not replace them.
import type { Me, ProjectRole } from './types';

const RANK: Record<ProjectRole, number> = { viewer: 1, engineer: 2, lead: 3, admin: 4 };

/** The person's role in a project: 'admin' for admins, else the membership's role, else null. */
export function roleIn(me: Me | undefined, slug: string | undefined): ProjectRole | null {
  if (!me) return null;
  if (me.user.isAdmin) return 'admin';
  if (!slug) return null;
  return me.memberships.find((m) => m.project.slug === slug)?.role ?? null;
}

export function atLeast(role: ProjectRole | null, min: ProjectRole): boolean {
  return role !== null && RANK[role] >= RANK[min];
}

export const can = {
  readProject: (r: ProjectRole | null) => atLeast(r, 'viewer'),
  watch: (r: ProjectRole | null) => atLeast(r, 'engineer'),
  editRules: (r: ProjectRole | null) => atLeast(r, 'lead'),
  manageTokens: (r: ProjectRole | null) => atLeast(r, 'lead'),
  /** The git host of the pull-request feedback (server/resources/hosts/policy.ts). */
  manageHost: (r: ProjectRole | null) => atLeast(r, 'lead'),
  manageMembers: (r: ProjectRole | null) => atLeast(r, 'lead'),
  /** Plans and sweeps: engineers and above start and cancel them (server/resources/jobs/policy.ts). */
  startJob: (r: ProjectRole | null) => atLeast(r, 'engineer'),
  /** Trying a design: admins, and engineers or leads of at least one project. */
  tryDesign: (me: Me | undefined) => !!me && (me.user.isAdmin || me.memberships.some((m) => m.role === 'lead' || m.role === 'engineer')),
  manageUsers: (me: Me | undefined) => !!me?.user.isAdmin,
  createProject: (me: Me | undefined) => !!me?.user.isAdmin,
  deleteProject: (me: Me | undefined) => !!me?.user.isAdmin,
};

export const roleLabel: Record<ProjectRole, string> = {
  admin: 'Admin',
  lead: 'Lead',
  engineer: 'Engineer',
  viewer: 'Viewer',
};
