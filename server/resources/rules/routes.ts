// GET/PUT /api/projects/:slug/rules, POST /api/projects/:slug/rules/revert and
// GET /api/projects/:slug/rules/history.
import express, { Router } from 'express';
import { Op } from 'sequelize';
import type { Rules } from '../../../shared/types';
import type { RuleHistory, TeamRules as TeamRulesView } from '../../../shared/report/api';
import { RULE_NAMES, SIMULATION_RULE_NAMES, RULES_SCHEMA } from '../../../shared/report/rules';

/** Every rule a team may set: the gate's and simulate's (both in RULES_SCHEMA), each kept in the history. */
const TEAM_RULE_NAMES: readonly string[] = [...RULE_NAMES, ...SIMULATION_RULE_NAMES];
import type { AppContext } from '../../context';
import type { Project, User as UserRow } from '../../db/models';
import { projectAccess } from '../../http/access';
import { requireUser } from '../../http/auth';
import { allow, badRequest, notFound } from '../../http/errors';
import { send } from '../../http/present';
import { checker } from '../../http/validate';
import { checkRules } from '../../../shared/report/rules';
import { canEditRules, canReadRuleHistory, canReadRules } from './policy';

const json = express.json({ limit: '16kb' });

/** Why the rules changed: kept with each change in the history. */
export const reasonSchema = { type: 'string', maxLength: 500 };

const checkPut = checker<{ rules: Rules; reason?: string }>({
  type: 'object', required: ['rules'], additionalProperties: false, properties: { rules: RULES_SCHEMA, reason: reasonSchema },
});

const checkRevert = checker<{ to: number; reason?: string }>({
  type: 'object', required: ['to'], additionalProperties: false,
  properties: { to: { type: 'integer', minimum: 1, maximum: 2147483647 }, reason: reasonSchema },
});

/** An empty or blank reason is no reason. */
const reasonOf = (r: string | undefined) => (r?.trim() ? r.trim() : null);

export function ruleRoutes(ctx: AppContext): Router {
  const router = Router();
  const { TeamRules, RuleChange, User } = ctx.db.models;

  async function current(project: Project) {
    const row = await TeamRules.findByPk(project.id, { include: [{ model: User, as: 'editor' }] });
    return {
      rules: (row?.rules ?? {}) as Rules,
      regressionTolerance: project.regressionTolerance,
      updatedAt: row?.updatedAt ?? null,
      updatedBy: row?.editor ? { id: row.editor.id, name: row.editor.name } : null,
    };
  }

  router.get('/api/projects/:slug/rules', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canReadRules(role));
    send<TeamRulesView>(res, await current(project));
  });

  /**
   * Saves `rules` as the team's rules, one history entry per changed rule with the reason (and,
   * for a revert, the change gone back to). Row lock: two leads saving at once both get their
   * change recorded against the right old value.
   */
  async function saveRules(project: Project, user: UserRow, rules: Rules, reason: string | null, revertOf: number | null, tolerance?: number): Promise<string[]> {
    return ctx.db.sequelize.transaction(async (transaction) => {
      await TeamRules.findOrCreate({ where: { projectId: project.id }, defaults: { projectId: project.id, rules: {}, updatedBy: null }, transaction });
      const row = (await TeamRules.findByPk(project.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
      const old = row.rules ?? {};
      const before = old as Record<string, unknown>;
      const after = rules as Record<string, unknown>;
      const changed = TEAM_RULE_NAMES.filter((k) => JSON.stringify(before[k] ?? null) !== JSON.stringify(after[k] ?? null));
      for (const rule of changed) {
        await RuleChange.create({ projectId: project.id, userId: user.id, rule, oldValue: before[rule] ?? null, newValue: after[rule] ?? null, reason, revertOf }, { transaction });
      }
      if (changed.length) await row.update({ rules, updatedBy: user.id }, { transaction });
      if (tolerance !== undefined && tolerance !== project.regressionTolerance) {
        await RuleChange.create({ projectId: project.id, userId: user.id, rule: 'regression_tolerance', oldValue: project.regressionTolerance, newValue: tolerance, reason, revertOf }, { transaction });
        await project.update({ regressionTolerance: tolerance }, { transaction });
        changed.push('regression_tolerance');
      }
      return changed;
    });
  }

  function refuseInvalid(rules: Rules): void {
    // The CLI reads these rules with the engine's own check: refuse here whatever it would refuse.
    const { problems } = checkRules(rules);
    if (problems.length) throw badRequest(`The rules are not valid: ${problems[0]!.message}.`, problems.map((p) => ({ path: `/rules/${p.path.slice(1).join('/')}`, message: p.message })));
  }

  router.put('/api/projects/:slug/rules', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canEditRules(role), 'Only a lead changes the team rules.');
    const user = requireUser(req);
    const { rules, reason } = checkPut(req.body);
    refuseInvalid(rules);
    const changed = await saveRules(project, user, rules, reasonOf(reason), null);
    send<TeamRulesView & { changed: string[] }>(res, { ...(await current(project)), changed });
  });

  // Back to the rules (and regression tolerance) as they were right after change `to`: every later
  // change is undone, newest first, and the result is saved as new changes that name `to`.
  router.post('/api/projects/:slug/rules/revert', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canEditRules(role), 'Only a lead changes the team rules.');
    const user = requireUser(req);
    const { to, reason } = checkRevert(req.body);
    const target = await RuleChange.findOne({ where: { id: to, projectId: project.id } });
    if (!target) throw notFound('No such change in this project\'s rule history.');
    const later = await RuleChange.findAll({ where: { projectId: project.id, id: { [Op.gt]: to } }, order: [['id', 'DESC']] });
    const rules: Record<string, unknown> = { ...((await current(project)).rules as Record<string, unknown>) };
    let tolerance = project.regressionTolerance;
    for (const c of later) {
      if (TEAM_RULE_NAMES.includes(c.rule)) {
        if (c.oldValue === null || c.oldValue === undefined) delete rules[c.rule];
        else rules[c.rule] = c.oldValue;
      } else if (c.rule === 'regression_tolerance' && typeof c.oldValue === 'number') {
        tolerance = c.oldValue;
      }
      // Retention (branch_run_days) is not a rule of the gate: a revert leaves it as it is.
    }
    refuseInvalid(rules as Rules);
    const why = reasonOf(reason);
    const changed = await saveRules(project, user, rules as Rules, `Back to the rules after change #${to}${why ? `: ${why}` : ''}`, to, tolerance);
    send<TeamRulesView & { changed: string[] }>(res, { ...(await current(project)), changed });
  });

  router.get('/api/projects/:slug/rules/history', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canReadRuleHistory(role));
    const limit = req.query.limit === undefined ? 100 : Number(req.query.limit);
    if (!Number.isInteger(limit) || limit < 1 || limit > 500) throw badRequest('limit must be an integer from 1 to 500.');
    const before = req.query.before === undefined ? null : Number(req.query.before);
    if (before !== null && !Number.isInteger(before)) throw badRequest('before must be a change id.');
    const rows = await RuleChange.findAll({
      where: { projectId: project.id, ...(before !== null ? { id: { [Op.lt]: before } } : {}) },
      include: [{ model: User, as: 'user' }],
      order: [['id', 'DESC']],
      limit: limit + 1,
    });
    const page = rows.slice(0, limit);
    send<RuleHistory>(res, {
      changes: page.map((c) => ({
        id: c.id, rule: c.rule, oldValue: c.oldValue, newValue: c.newValue, reason: c.reason ?? null, revertOf: c.revertOf ?? null, at: c.createdAt,
        by: c.user ? { id: c.user.id, name: c.user.name } : null,
      })),
      nextBefore: rows.length > limit ? page[page.length - 1]!.id : null,
    });
  });

  return router;
}
