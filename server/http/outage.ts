// The database being unreachable is not a bug of the request: such errors are answered 503 with
// Retry-After (the CLI retries then), and logged once when the outage begins and once when a
// probe finds the database again, instead of a stack trace per request.
import type { Sequelize } from 'sequelize';

const CONNECTION_ERRORS = new Set([
  'SequelizeConnectionError', 'SequelizeConnectionRefusedError', 'SequelizeHostNotFoundError', 'SequelizeHostNotReachableError',
  'SequelizeConnectionTimedOutError', 'SequelizeConnectionAcquireTimeoutError', 'SequelizeAccessDeniedError', 'SequelizeInvalidConnectionError',
]);
const SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENOTFOUND', 'EAI_AGAIN']);

/** True when the error says the database cannot be reached, not that a query was wrong. */
export function isDatabaseUnavailable(err: unknown): boolean {
  const e = err as { name?: string; code?: string; message?: string; parent?: { code?: string; message?: string }; original?: { code?: string } } | null;
  if (!e || typeof e !== 'object') return false;
  if (e.name && CONNECTION_ERRORS.has(e.name)) return true;
  const code = e.parent?.code ?? e.original?.code ?? e.code;
  // SQLSTATE class 08 (connection exception), 57P01-57P03 (shutdown, cannot connect now):
  // PostgreSQL documentation, Appendix A.
  if (code && (/^08/.test(code) || /^57P0[123]$/.test(code) || SOCKET_CODES.has(code))) return true;
  const message = `${e.message ?? ''} ${e.parent?.message ?? ''}`;
  return /Connection terminated|connection is closed|Client has encountered a connection error|timeout exceeded when trying to connect/i.test(message);
}

export interface OutageMonitor {
  /** Call with an error of a request: true when it is an outage (the caller answers 503). */
  report(err: unknown): boolean;
  readonly down: boolean;
  stop(): void;
}

export function outageMonitor(sequelize: Sequelize, log: (msg: string) => void, o: { probeMs?: number } = {}): OutageMonitor {
  let since: number | null = null;
  let refused = 0;
  let probe: NodeJS.Timeout | null = null;
  const probeMs = o.probeMs ?? 1000;
  const check = async () => {
    try {
      await sequelize.query('SELECT 1');
    } catch {
      return;
    }
    if (since !== null) {
      log(`database reachable again after ${((Date.now() - since) / 1000).toFixed(1)} s; ${refused} request${refused === 1 ? '' : 's'} answered 503 meanwhile`);
    }
    since = null;
    refused = 0;
    if (probe) clearInterval(probe);
    probe = null;
  };
  return {
    report(err) {
      if (!isDatabaseUnavailable(err)) return false;
      refused++;
      if (since === null) {
        since = Date.now();
        const e = err as { message?: string; parent?: { message?: string } };
        log(`database unreachable (${e.parent?.message ?? e.message ?? String(err)}); answering 503 until it is back`);
        probe = setInterval(() => void check(), probeMs);
        probe.unref();
      }
      return true;
    },
    get down() {
      return since !== null;
    },
    stop() {
      if (probe) clearInterval(probe);
      probe = null;
    },
  };
}
