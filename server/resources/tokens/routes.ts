// GET/POST /api/projects/:slug/tokens, DELETE /api/projects/:slug/tokens/:id.
import express, { Router } from 'express';
import type { AppContext } from '../../context';
import type { CiToken } from '../../db/models';
import { projectAccess } from '../../http/access';
import { CI_TOKEN_PREFIX, hashSecret, newSecret, requireUser } from '../../http/auth';
import { allow, notFound } from '../../http/errors';
import { checker, idParam } from '../../http/validate';
import { send, type Sent } from '../../http/present';
import type { CiToken as ApiCiToken, TokenAnswer, TokenCreated, TokenList } from '../../../shared/report/api';
import { canCreateToken, canListTokens, canRevokeToken } from './policy';

const json = express.json({ limit: '16kb' });
const checkCreate = checker<{ name: string }>({
  type: 'object', required: ['name'], additionalProperties: false,
  properties: { name: { type: 'string', minLength: 1, maxLength: 100 } },
});

/** Shown in lists so a lead can tell tokens apart: the token's first characters. */
const PREFIX_LENGTH = CI_TOKEN_PREFIX.length + 6;

function presentToken(t: CiToken): Sent<ApiCiToken> {
  return {
    id: t.id,
    name: t.name,
    prefix: t.prefix,
    createdBy: t.creator ? { id: t.creator.id, name: t.creator.name } : null,
    createdAt: t.createdAt,
    lastUsedAt: t.lastUsedAt,
    revokedAt: t.revokedAt,
  };
}

export function tokenRoutes(ctx: AppContext): Router {
  const router = Router();
  const { CiToken, User } = ctx.db.models;

  router.get('/api/projects/:slug/tokens', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canListTokens(role), 'Only a lead manages CI tokens.');
    const tokens = await CiToken.findAll({ where: { projectId: project.id }, include: [{ model: User, as: 'creator' }], order: [['id', 'DESC']] });
    send<TokenList>(res, { tokens: tokens.map(presentToken) });
  });

  router.post('/api/projects/:slug/tokens', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canCreateToken(role), 'Only a lead manages CI tokens.');
    const user = requireUser(req);
    const { name } = checkCreate(req.body);
    const secret = newSecret(CI_TOKEN_PREFIX);
    const token = await CiToken.create({
      projectId: project.id, name, tokenHash: hashSecret(secret), prefix: secret.slice(0, PREFIX_LENGTH), createdBy: user.id,
    });
    token.creator = user;
    // The only time the secret leaves the server; only its hash is stored.
    send<TokenCreated>(res.status(201), { token: presentToken(token), secret });
  });

  router.delete('/api/projects/:slug/tokens/:id', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canRevokeToken(role), 'Only a lead manages CI tokens.');
    const id = idParam(req.params.id);
    const token = id === null ? null : await CiToken.findOne({ where: { id, projectId: project.id }, include: [{ model: User, as: 'creator' }] });
    if (!token) throw notFound('No such token in this project.');
    if (!token.revokedAt) await token.update({ revokedAt: new Date() });
    send<TokenAnswer>(res, { token: presentToken(token) });
  });

  return router;
}
