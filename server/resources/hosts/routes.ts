// GET/PUT/DELETE /api/projects/:slug/host: the project's git host for pull-request feedback.
import express, { Router } from 'express';
import type { HostConnection, HostKind } from '../../../shared/report/api';
import type { AppContext } from '../../context';
import { projectAccess } from '../../http/access';
import { requireUser } from '../../http/auth';
import { HttpError, allow, badRequest, notFound } from '../../http/errors';
import { send } from '../../http/present';
import { checker } from '../../http/validate';
import { refuseHostAddress } from './address';
import { canManageHost } from './policy';
import { sealToken } from './secret';
import { deleteConnection, loadConnection, presentConnection, saveConnection } from './store';

const json = express.json({ limit: '16kb' });

/** The public hosts' API addresses, used when a lead gives none. */
export const DEFAULT_API_URL: Record<HostKind, string> = { github: 'https://api.github.com', gitlab: 'https://gitlab.com/api/v4' };

const checkPut = checker<{ kind: HostKind; apiUrl?: string; repository: string; token?: string }>({
  type: 'object', required: ['kind', 'repository'], additionalProperties: false,
  properties: {
    kind: { enum: ['github', 'gitlab'] },
    apiUrl: { type: 'string', maxLength: 500, pattern: '^https?://[^\\s]+$', 'x-message': 'must be an http:// or https:// address' },
    repository: { type: 'string', minLength: 1, maxLength: 300 },
    // Kept as given: the server never shows it again, only its last 4 characters.
    token: { type: 'string', minLength: 8, maxLength: 1000, pattern: '^\\S+$', 'x-message': 'must be the token without spaces' },
  },
});

const REPOSITORY: Record<HostKind, { pattern: RegExp; example: string }> = {
  github: { pattern: /^[A-Za-z0-9_.-]+\/[A-Za-z0-9_.-]+$/, example: '"owner/name"' },
  gitlab: { pattern: /^(?:\d+|[A-Za-z0-9_.-]+(?:\/[A-Za-z0-9_.-]+)+)$/, example: '"group/name" (subgroups allowed) or the numeric project id' },
};

export function hostRoutes(ctx: AppContext): Router {
  const router = Router();

  router.get('/api/projects/:slug/host', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canManageHost(role), 'Only a lead manages the git host connection.');
    const row = await loadConnection(ctx, project.id);
    send<{ host: HostConnection | null }>(res, { host: row ? presentConnection(row) : null });
  });

  router.put('/api/projects/:slug/host', json, async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canManageHost(role), 'Only a lead manages the git host connection.');
    const user = requireUser(req);
    const body = checkPut(req.body);
    const repo = REPOSITORY[body.kind];
    if (!repo.pattern.test(body.repository)) throw badRequest(`The repository of a ${body.kind === 'github' ? 'GitHub' : 'GitLab'} project is ${repo.example}, not "${body.repository}".`);
    const apiUrl = (body.apiUrl ?? DEFAULT_API_URL[body.kind]).replace(/\/+$/, '');
    try { new URL(apiUrl); } catch { throw badRequest(`The API address "${apiUrl}" is not a URL.`); }
    // The server will call this address with the token: https to public hosts only (SSRF).
    const refused = await refuseHostAddress(apiUrl, ctx.config.hostAddress, 'accept');
    if (refused) throw badRequest(refused);
    const key = ctx.config.secretKey;
    if (!key) throw new HttpError(503, 'no-secret-key', 'The server has no PLEAT_SECRET_KEY to encrypt host tokens with; an administrator sets it (docs/server.md, Git hosts).');
    const existing = await loadConnection(ctx, project.id);
    if (!body.token && !existing) throw badRequest('A new connection needs the token the server posts with.');
    await saveConnection(ctx, {
      projectId: project.id, kind: body.kind, apiUrl, repository: body.repository, userId: user.id,
      sealed: body.token ? sealToken(key, project.id, body.token) : null, last4: body.token ? body.token.slice(-4) : null,
    });
    send<{ host: HostConnection | null }>(res, { host: presentConnection((await loadConnection(ctx, project.id))!) });
  });

  router.delete('/api/projects/:slug/host', async (req, res) => {
    const { project, role } = await projectAccess(ctx, req, { slug: req.params.slug });
    allow(canManageHost(role), 'Only a lead manages the git host connection.');
    if (!(await deleteConnection(ctx, project.id))) throw notFound('This project is not connected to a git host.');
    res.status(204).end();
  });

  return router;
}
