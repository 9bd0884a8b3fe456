// After a new run is stored: the commit status and the one summary comment on the branch's open
// pull/merge request. Runs after the upload's response has gone out (afterResponse), so the host
// never slows or fails an upload; what went wrong is kept on the connection and shown on the
// project, and logged.
import { hostFileUrl } from '../../../shared/report/hostLinks';
import { QueryTypes } from 'sequelize';
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { compareRun, type RunRow } from '../runs/compare';
import { refuseHostAddress } from './address';
import type { HostClient, HostSettings, OpenRequest } from './client';
import { githubClient } from './github';
import { gitlabClient } from './gitlab';
import { openToken } from './secret';
import { loadConnection, recordOutcome, repositoryWebUrl } from './store';
import { COMMENT_MARKER, statusDescription, summaryComment, type FileLink } from './summary';

const HOST_NAME = { github: 'GitHub', gitlab: 'GitLab' } as const;

function hostClient(s: HostSettings): HostClient {
  return s.kind === 'github' ? githubClient(s) : gitlabClient(s);
}

/** Names the step that failed, so the project page says what the host refused. */
async function step<T>(what: string, work: () => Promise<T>): Promise<T> {
  try {
    return await work();
  } catch (err) {
    const e = err as { status?: number; message?: string; name?: string; cause?: { code?: string } };
    const why = e.name === 'TimeoutError' ? 'no answer in time'
      : e.cause?.code ? `${e.cause.code}` : `${e.status ? `${e.status} ` : ''}${e.message ?? String(err)}`;
    throw new Error(`${what}: ${why}`);
  }
}

export async function postHostFeedback(ctx: AppContext, project: Project, run: RunRow, report: Report): Promise<void> {
  const conn = await loadConnection(ctx, project.id);
  if (!conn) return;
  const host = HOST_NAME[conn.kind];
  try {
    const key = ctx.config.secretKey;
    if (!key) throw new Error('the server has no PLEAT_SECRET_KEY, so the stored token cannot be read');
    const token = openToken(key, project.id, conn.token_sealed);
    if (token === null) throw new Error('the stored token does not open with this server\'s PLEAT_SECRET_KEY; a lead enters it again');
    // Checked again before every call: a name may resolve elsewhere than when it was saved.
    const refused = await refuseHostAddress(conn.api_url, ctx.config.hostAddress, 'refuse');
    if (refused) throw new Error(refused);
    const client = hostClient({ kind: conn.kind, apiUrl: conn.api_url, repository: conn.repository, token, timeoutMs: ctx.config.hostTimeoutMs, addressPolicy: ctx.config.hostAddress });
    const request = await step(`finding the open request of ${run.branch}`, () => client.findOpenRequest(run.branch));
    if (request) {
      const link = `${ctx.config.publicUrl}/projects/${encodeURIComponent(project.slug)}/runs/${run.id}`;
      await step('posting the commit status', () => client.postStatus(run.commit, report.verdict === 'pass' ? 'success' : 'failure', statusDescription(report), link));
      const { comparison } = await compareRun(ctx, run, project);
      const web = repositoryWebUrl(conn.kind, conn.api_url, conn.repository);
      const fileLink: FileLink | undefined = web ? (file, line) => hostFileUrl({ kind: conn.kind, webUrl: web }, run.commit, file, line) : undefined;
      const body = summaryComment({ report, comparison, branch: run.branch, commit: run.commit, link, fileLink });
      await postComment(ctx, client, project.id, request, run, body);
    }
    await recordOutcome(ctx, project.id, null);
  } catch (err) {
    const message = `${host}: ${err instanceof Error ? err.message : String(err)}`;
    ctx.log(`host feedback of run ${run.id} (${project.slug}): ${message}`);
    await recordOutcome(ctx, project.id, message).catch(() => {});
  }
}

/**
 * One comment per request, edited on every push: the id kept in host_comments, else the comment
 * that carries the marker, else a new one. An advisory lock per request serialises two uploads
 * of one branch, so neither makes a second comment, and a run older than the one shown does not
 * overwrite it.
 */
async function postComment(ctx: AppContext, client: HostClient, projectId: number, request: OpenRequest, run: RunRow, body: string): Promise<void> {
  const q = ctx.db.sequelize;
  await q.transaction(async (transaction) => {
    await q.query('SELECT pg_advisory_xact_lock(hashtext($1))', { bind: [`pleat-host-comment:${projectId}:${request.number}`], transaction });
    const [known] = await q.query<{ comment_id: string; run_id: number | null; run_created_at: Date | null }>(
      'SELECT comment_id, run_id, run_created_at FROM host_comments WHERE project_id = $1 AND number = $2',
      { bind: [projectId, request.number], type: QueryTypes.SELECT, transaction },
    );
    if (known?.run_created_at && known.run_id !== null
      && (known.run_created_at.getTime() > run.created_at.getTime() || (known.run_created_at.getTime() === run.created_at.getTime() && known.run_id > run.id))) {
      return; // a newer run's summary is up already
    }
    let id: string | null = null;
    if (known && (await step('editing the summary comment', () => client.updateComment(request.number, known.comment_id, body))) === 'ok') id = known.comment_id;
    if (!id) {
      const found = await step('looking for the summary comment', () => client.findComment(request.number, COMMENT_MARKER));
      if (found && (await step('editing the summary comment', () => client.updateComment(request.number, found, body))) === 'ok') id = found;
    }
    id ??= await step('writing the summary comment', () => client.createComment(request.number, body));
    await q.query(
      `INSERT INTO host_comments (project_id, number, comment_id, run_id, run_created_at) VALUES ($1, $2, $3, $4, $5)
       ON CONFLICT (project_id, number) DO UPDATE SET comment_id = EXCLUDED.comment_id, run_id = EXCLUDED.run_id,
         run_created_at = EXCLUDED.run_created_at, updated_at = now()`,
      { bind: [projectId, request.number, id, run.id, run.created_at], transaction },
    );
  });
}
