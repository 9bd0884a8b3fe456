// CI tokens: created, listed and revoked by the project's leads.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** A lead (or an admin) sees the project's CI tokens (names and prefixes, never the secrets). */
export const canListTokens = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** A lead (or an admin) creates a CI token; its secret is shown once. */
export const canCreateToken = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** A lead (or an admin) revokes a CI token. */
export const canRevokeToken = (role: ProjectRole): boolean => isAtLeast(role, 'lead');
