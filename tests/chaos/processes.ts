// Real server processes for the fault tests: the bundled server (dist/server/main.js) on a
// private schema of the test database, started and killed like in production.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { createServer, type AddressInfo } from 'node:net';
import path from 'node:path';
import { execa } from 'execa';
import { TEST_DATABASE_URL } from '../../server/test/db';

export const ROOT = path.resolve(import.meta.dirname, '../..');
const BUNDLE = path.join(ROOT, 'dist/server/main.js');

function newest(dir: string): number {
  let t = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    t = Math.max(t, e.isDirectory() ? newest(p) : statSync(p).mtimeMs);
  }
  return t;
}

/** Builds the server bundle when a source is newer (one build at a time across test files). */
export async function ensureServerBuilt(): Promise<void> {
  const fresh = () => existsSync(BUNDLE) && statSync(BUNDLE).mtimeMs >= Math.max(newest(path.join(ROOT, 'server')), newest(path.join(ROOT, 'shared')));
  if (fresh()) return;
  const lock = path.join(ROOT, '.tmp', 'server-build.lock');
  mkdirSync(path.dirname(lock), { recursive: true });
  const deadline = Date.now() + 120_000;
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      if (Date.now() > deadline) throw new Error('timed out waiting for another server build');
      await new Promise((r) => setTimeout(r, 200));
    }
  }
  try {
    if (!fresh()) await execa(process.execPath, ['scripts/build.mjs', '--server-only'], { cwd: ROOT });
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export async function freePort(): Promise<number> {
  const s = createServer();
  await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
  const { port } = s.address() as AddressInfo;
  await new Promise((r) => s.close(r));
  return port;
}

export interface ServerProcess {
  url: string;
  port: number;
  child: ChildProcess;
  stderr: string[];
  /** Resolves when the process has exited. */
  exited: Promise<void>;
}

export async function startServerProcess(schema: string, port?: number, databaseUrl = TEST_DATABASE_URL): Promise<ServerProcess> {
  const p = port ?? await freePort();
  const stderr: string[] = [];
  const child = spawn(process.execPath, [BUNDLE, 'serve'], {
    cwd: ROOT,
    env: {
      ...process.env, PLEAT_ENV: 'production', PLEAT_DATABASE_URL: databaseUrl, PLEAT_DB_SCHEMA: schema, PLEAT_PORT: String(p),
      PLEAT_JWT_SECRET: 'chaos-test-secret', PLEAT_SMTP_HOST: 'none', PLEAT_MIGRATE: '0', PLEAT_UPLOAD_LIMIT: '1000000',
      PLEAT_UPLOAD_QUOTA: '1000000', PLEAT_MAINTENANCE_MIN: '0', PLEAT_DB_POOL: '10',
    },
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  const exited = new Promise<void>((r) => child.once('exit', () => r()));
  let listening!: () => void;
  const ready = new Promise<void>((r) => (listening = r));
  child.stderr!.setEncoding('utf8').on('data', (d: string) => {
    stderr.push(d);
    if (d.includes('listening on')) listening();
  });
  await Promise.race([ready, exited.then(() => { throw new Error(`server exited: ${stderr.join('')}`); })]);
  return { url: `http://127.0.0.1:${p}`, port: p, child, stderr, exited };
}
