// The shapes the server's API returns (server/resources/*/routes.ts), as the web report reads
// them. Dates arrive as ISO strings. All of them live in shared/report/api.ts, which the server's
// presenters are checked against too (server/http/present.ts `send`), so both ends agree.
export type * from '../../shared/report/api';
export type { DesignReport, Diagnostic, EffectiveRules, Report, RuleName, RuleSource, Rules, Status, Violation } from '../../shared/types';
