// Team-wide rules: a floor under every repository's own rules.
import { isAtLeast, type ProjectRole } from '../../http/access';

/** Members read the rules, and so does the project's CI token (the CLI applies them as a floor). */
export const canReadRules = (role: ProjectRole): boolean => role === 'ci' || isAtLeast(role, 'viewer');

/** Only a lead (or an admin) changes the team's rules. */
export const canEditRules = (role: ProjectRole): boolean => isAtLeast(role, 'lead');

/** Every member may read who changed which rule and when. */
export const canReadRuleHistory = (role: ProjectRole): boolean => isAtLeast(role, 'viewer');
