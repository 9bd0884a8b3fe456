// The rows of host_connections and host_comments (migration 004-host-connections).
import { QueryTypes, type Transaction } from 'sequelize';
import type { HostConnection, HostKind, HostStatus } from '../../../shared/report/api';
import type { AppContext } from '../../context';
import type { Sent } from '../../http/present';

export interface ConnectionRow {
  project_id: number;
  kind: HostKind;
  api_url: string;
  repository: string;
  token_sealed: string;
  token_last4: string;
  updated_by: number | null;
  updated_by_name: string | null;
  updated_at: Date;
  last_ok_at: Date | null;
  last_error: string | null;
  last_error_at: Date | null;
}

const SELECT = `SELECT h.*, u.name AS updated_by_name FROM host_connections h LEFT JOIN users u ON u.id = h.updated_by`;

export async function loadConnection(ctx: AppContext, projectId: number): Promise<ConnectionRow | null> {
  const [row] = await ctx.db.sequelize.query<ConnectionRow>(`${SELECT} WHERE h.project_id = $1`, { bind: [projectId], type: QueryTypes.SELECT });
  return row ?? null;
}

/**
 * The repository's web address, from the API address: api.github.com serves github.com, a GitHub
 * Enterprise server its API under /api/v3 and GitLab under /api/v4 (the hosts' REST references).
 * A GitLab project named by its numeric id has no path to show.
 */
export function repositoryWebUrl(kind: HostKind, apiUrl: string, repository: string): string | null {
  if (kind === 'gitlab' && /^\d+$/.test(repository)) return null;
  let url: URL;
  try { url = new URL(apiUrl); } catch { return null; }
  if (kind === 'github' && url.hostname === 'api.github.com') return `https://github.com/${repository}`;
  const suffix = kind === 'github' ? /\/api\/v3\/?$/ : /\/api\/v4\/?$/;
  if (!suffix.test(url.pathname)) return null;
  return `${url.origin}${url.pathname.replace(suffix, '')}/${repository}`;
}

export function presentStatus(h: ConnectionRow): Sent<HostStatus> {
  return {
    kind: h.kind, repository: h.repository, webUrl: repositoryWebUrl(h.kind, h.api_url, h.repository),
    lastOkAt: h.last_ok_at, lastError: h.last_error, lastErrorAt: h.last_error_at,
  };
}

export function presentConnection(h: ConnectionRow): Sent<HostConnection> {
  return {
    ...presentStatus(h),
    apiUrl: h.api_url,
    token: { set: true, last4: h.token_last4 },
    updatedAt: h.updated_at,
    updatedBy: h.updated_by !== null && h.updated_by_name !== null ? { id: h.updated_by, name: h.updated_by_name } : null,
  };
}

/** The host status of each of these projects (absent: not connected), in one query. */
export async function hostStatuses(ctx: AppContext, projectIds: number[]): Promise<Map<number, Sent<HostStatus>>> {
  if (!projectIds.length) return new Map();
  const rows = await ctx.db.sequelize.query<ConnectionRow>(`${SELECT} WHERE h.project_id = ANY($1::int[])`, { bind: [projectIds], type: QueryTypes.SELECT });
  return new Map(rows.map((r) => [r.project_id, presentStatus(r)]));
}

export async function saveConnection(ctx: AppContext, o: {
  projectId: number; kind: HostKind; apiUrl: string; repository: string; sealed: string | null; last4: string | null; userId: number;
}): Promise<void> {
  // A new token, or the stored one kept (sealed null); a changed host forgets the comments it knew.
  await ctx.db.sequelize.transaction(async (transaction: Transaction) => {
    const [before] = await ctx.db.sequelize.query<{ kind: string; api_url: string; repository: string }>(
      'SELECT kind, api_url, repository FROM host_connections WHERE project_id = $1 FOR UPDATE',
      { bind: [o.projectId], type: QueryTypes.SELECT, transaction },
    );
    if (before && (before.kind !== o.kind || before.api_url !== o.apiUrl || before.repository !== o.repository)) {
      await ctx.db.sequelize.query('DELETE FROM host_comments WHERE project_id = $1', { bind: [o.projectId], transaction });
    }
    if (o.sealed === null || o.last4 === null) {
      // No new token: the stored one stays (the caller checked that there is one).
      await ctx.db.sequelize.query(
        `UPDATE host_connections SET kind = $2, api_url = $3, repository = $4, updated_by = $5, updated_at = now() WHERE project_id = $1`,
        { bind: [o.projectId, o.kind, o.apiUrl, o.repository, o.userId], transaction },
      );
      return;
    }
    await ctx.db.sequelize.query(
      `INSERT INTO host_connections (project_id, kind, api_url, repository, token_sealed, token_last4, updated_by)
       VALUES ($1, $2, $3, $4, $5, $6, $7)
       ON CONFLICT (project_id) DO UPDATE SET kind = EXCLUDED.kind, api_url = EXCLUDED.api_url, repository = EXCLUDED.repository,
         token_sealed = EXCLUDED.token_sealed, token_last4 = EXCLUDED.token_last4, updated_by = EXCLUDED.updated_by, updated_at = now()`,
      { bind: [o.projectId, o.kind, o.apiUrl, o.repository, o.sealed, o.last4, o.userId], transaction },
    );
  });
}

export async function deleteConnection(ctx: AppContext, projectId: number): Promise<boolean> {
  const rows = await ctx.db.sequelize.query('DELETE FROM host_connections WHERE project_id = $1 RETURNING project_id', { bind: [projectId], type: QueryTypes.SELECT });
  await ctx.db.sequelize.query('DELETE FROM host_comments WHERE project_id = $1', { bind: [projectId] });
  return rows.length > 0;
}

/** Keeps the outcome of one feedback: the time of success, or the failure and its time. */
export async function recordOutcome(ctx: AppContext, projectId: number, error: string | null): Promise<void> {
  await ctx.db.sequelize.query(
    error === null
      ? 'UPDATE host_connections SET last_ok_at = now() WHERE project_id = $1'
      : 'UPDATE host_connections SET last_error = $2, last_error_at = now() WHERE project_id = $1',
    { bind: error === null ? [projectId] : [projectId, error.slice(0, 1000)] },
  );
}
