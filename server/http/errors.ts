// Errors leave the server as JSON {error: {code, message}} and never carry a stack trace.
import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { ApiErrorBody } from '../../shared/report/api';
import type { OutageMonitor } from './outage';

export class HttpError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details?: unknown,
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details?: unknown) => new HttpError(400, 'bad-request', message, details);
export const unauthorized = (message = 'Sign in first.', code = 'unauthorized') => new HttpError(401, code, message);
export const forbidden = (message = 'Your role does not allow this.', code = 'forbidden') => new HttpError(403, code, message);
export const notFound = (message = 'Not found.') => new HttpError(404, 'not-found', message);
export const conflict = (message: string, code = 'conflict') => new HttpError(409, code, message);
export const gone = (message: string, code = 'gone') => new HttpError(410, code, message);

/** Throws 403 unless the policy said yes. */
export function allow(yes: boolean, message?: string): void {
  if (!yes) throw forbidden(message);
}

export const apiNotFound: RequestHandler = (req, res) => {
  res.status(404).json({ error: { code: 'not-found', message: `No API route ${req.method} ${req.originalUrl.split('?')[0]}.` } });
};

/** The invitation secret is the credential in its URL: logs get a placeholder instead. */
export function redactUrl(url: string): string {
  return url.replace(/(\/api\/invitations\/)[^/?#]+/g, '$1<secret>');
}

/**
 * One log entry for an unexpected error. Sequelize's errors carry a stack that begins with a bare
 * `Error` (it is captured before the query runs), so PostgreSQL's own message, code and detail
 * are put first; stack frames follow for everything else.
 */
export function describeError(err: unknown): string {
  const e = err as { name?: string; message?: string; stack?: string; parent?: { message?: string; code?: string; detail?: string }; original?: { code?: string } };
  if (!e || typeof e !== 'object') return String(err);
  const pg = e.parent ?? e.original;
  const head = `${e.name ?? 'Error'}: ${e.message ?? ''}${pg && 'code' in pg && pg.code ? ` (PostgreSQL ${pg.code}${e.parent?.detail ? `: ${e.parent.detail}` : ''})` : ''}`;
  const frames = (e.stack ?? '').split('\n').filter((l) => /^\s+at /.test(l)).slice(0, 12);
  return [head, ...frames].join('\n');
}

export function errorHandler(log: (msg: string) => void, outage?: OutageMonitor, retrySeconds = 5): ErrorRequestHandler {
  return (err, req, res, _next) => {
    if (outage?.report(err)) {
      // Logged once per outage by the monitor, not once per request.
      if (res.headersSent) return;
      res.set('Retry-After', String(retrySeconds));
      res.status(503).json({ error: { code: 'database-unavailable', message: `The database is not reachable right now; try again in ${retrySeconds} s.` } });
      return;
    }
    let status = 500;
    let body: ApiErrorBody['error'] = {
      code: 'internal',
      message: 'Something went wrong on the server; it has been logged.',
    };
    if (err instanceof HttpError) {
      status = err.status;
      body = { code: err.code, message: err.message };
      if (err.details !== undefined) body.details = err.details;
    } else if (err?.type === 'entity.too.large' || err?.code === 'LIMIT_FILE_SIZE') {
      status = 413;
      body = { code: 'too-large', message: `The request body is larger than the server accepts${err.limit ? ` (${err.limit} bytes)` : ''}.` };
    } else if (err?.type === 'entity.parse.failed') {
      status = 400;
      body = { code: 'invalid-json', message: 'The request body is not valid JSON.' };
    } else if (err instanceof URIError) {
      // Express could not decode a path parameter (a lone `%` or `%E0%A4` is not UTF-8).
      status = 400;
      body = { code: 'bad-path', message: 'The address has a malformed percent-encoding (each % must start a UTF-8 escape such as %2F).' };
    } else if (err?.name === 'MulterError') {
      status = 400;
      body = { code: 'bad-upload', message: `The uploaded form is not what this route expects (${err.code}).` };
    } else if (typeof err?.status === 'number' && err.status >= 400 && err.status < 500 && err.expose) {
      // Errors from body parsers and similar middleware that are safe to show.
      status = err.status;
      body = { code: 'bad-request', message: String(err.message) };
    }
    if (status >= 500) log(`${req.method} ${redactUrl(req.originalUrl)}: ${describeError(err)}`);
    if (res.headersSent) return;
    res.status(status).json({ error: body });
  };
}
