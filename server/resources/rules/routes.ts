// GET/PUT /api/projects/:slug/rules and GET /api/projects/:slug/rules/history.
import express, { Router } from 'express';
import { Op } from 'sequelize';
import type { RuleName, Rules } from '../../../shared/types';
import type { RuleHistory, TeamRules as TeamRulesView } from '../../../shared/report/api';
import { RULE_NAMES, RULES_SCHEMA } from '../../../shared/report/rules';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { projectAccess } from '../../http/access';
import { requireUser } from '../../http/auth';
import { allow, badRequest } from '../../http/errors';
import { send } from '../../http/present';
import { checker } from '../../http/validate';
import { checkRules } from '../../../shared/report/rules';
import { canEditRules, canReadRuleHistory, canReadRules } from './policy';

const json = express.json({ limit: '16kb' });

const checkPut = checker<{ rules: Rules }>({
  type: 'object', required: ['rules'], additionalProperties: false, properties: { rules: RULES_SCHEMA },
});

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

  router.put('/api/projects/:slug/rules', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canEditRules(role), 'Only a lead changes the team rules.');
    const user = requireUser(req);
    const { rules } = checkPut(req.body);
    // The CLI reads these rules with the engine's own check: refuse here whatever it would refuse.
    const { problems } = checkRules(rules);
    if (problems.length) throw badRequest(`The rules are not valid: ${problems[0]!.message}.`, problems.map((p) => ({ path: `/rules/${p.path.slice(1).join('/')}`, message: p.message })));
    const changes = await ctx.db.sequelize.transaction(async (transaction) => {
      // Row lock: two leads saving at once both get their change recorded against the right old value.
      await TeamRules.findOrCreate({ where: { projectId: project.id }, defaults: { projectId: project.id, rules: {}, updatedBy: null }, transaction });
      const row = (await TeamRules.findByPk(project.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
      const old = row.rules ?? {};
      const changed = RULE_NAMES.filter((k) => JSON.stringify(old[k] ?? null) !== JSON.stringify(rules[k] ?? null));
      for (const rule of changed) {
        await RuleChange.create({ projectId: project.id, userId: user.id, rule, oldValue: old[rule] ?? null, newValue: rules[rule] ?? null }, { transaction });
      }
      if (changed.length) await row.update({ rules, updatedBy: user.id }, { transaction });
      return changed;
    });
    send<TeamRulesView & { changed: RuleName[] }>(res, { ...(await current(project)), changed: changes });
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
        id: c.id, rule: c.rule, oldValue: c.oldValue, newValue: c.newValue, at: c.createdAt,
        by: c.user ? { id: c.user.id, name: c.user.name } : null,
      })),
      nextBefore: rows.length > limit ? page[page.length - 1]!.id : null,
    });
  });

  return router;
}
