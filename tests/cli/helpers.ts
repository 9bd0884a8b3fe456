// Shared set-up of the CLI process tests: build the CLI once (test files run in parallel, so a
// lock keeps two builds from overlapping), then run `node bin/pleat.js` as a user would.
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { execa } from 'execa';
import { vi } from 'vitest';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
export const BIN = path.join(ROOT, 'bin/pleat.js');
export const EXAMPLES = path.join(ROOT, 'examples');

function newestSource(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    if (entry.isDirectory()) newest = Math.max(newest, newestSource(p));
    else if (/\.(ts|json)$/.test(entry.name) && !entry.name.endsWith('.test.ts')) newest = Math.max(newest, statSync(p).mtimeMs);
  }
  return newest;
}

function isFresh(): boolean {
  const out = path.join(ROOT, 'dist/cli/pleat.cjs');
  if (!existsSync(out)) return false;
  const built = statSync(out).mtimeMs;
  const sources = Math.max(
    newestSource(path.join(ROOT, 'cli')),
    newestSource(path.join(ROOT, 'shared')),
    statSync(path.join(ROOT, 'scripts/build.mjs')).mtimeMs,
    statSync(path.join(ROOT, 'package.json')).mtimeMs,
  );
  return built >= sources;
}

/** Builds dist/cli unless it is newer than every source; safe to call from many test files. */
export async function ensureBuilt(): Promise<void> {
  if (isFresh()) return;
  const lock = path.join(ROOT, '.tmp', 'cli-build.lock');
  mkdirSync(path.dirname(lock), { recursive: true });
  await vi.waitFor(
    () => {
      try {
        mkdirSync(lock);
      } catch (err) {
        // Another test file is building; a lock older than two minutes is left over from a crash.
        try {
          if (Date.now() - statSync(lock).mtimeMs > 120_000) rmSync(lock, { recursive: true, force: true });
        } catch {
          /* gone meanwhile */
        }
        throw new Error(`waiting for another CLI build (${(err as Error).message})`);
      }
    },
    { timeout: 150_000, interval: 200 },
  );
  try {
    if (!isFresh()) await execa(process.execPath, ['scripts/build.mjs', '--cli-only'], { cwd: ROOT });
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export interface RunResult {
  exitCode: number;
  stdout: string;
  stderr: string;
}

/** Runs the built CLI. Colour variables are cleared unless a test sets them. */
export async function pleat(args: string[], opts: { cwd?: string; env?: Record<string, string | undefined> } = {}): Promise<RunResult> {
  const env: Record<string, string | undefined> = { ...process.env, NO_COLOR: undefined, FORCE_COLOR: undefined, ...opts.env };
  for (const k of Object.keys(env)) if (env[k] === undefined) delete env[k];
  const r = await execa(process.execPath, [BIN, ...args], { cwd: opts.cwd ?? ROOT, env, extendEnv: false, reject: false, stripFinalNewline: false });
  return { exitCode: r.exitCode ?? -1, stdout: String(r.stdout), stderr: String(r.stderr) };
}

const temps: string[] = [];

/** A fresh folder under the system temp dir, removed by cleanupTemps(). */
export function tempDir(prefix = 'pleat-cli-'): string {
  const d = mkdtempSync(path.join(tmpdir(), prefix));
  temps.push(d);
  return d;
}

export function cleanupTemps(): void {
  for (const d of temps.splice(0)) rmSync(d, { recursive: true, force: true });
}

export function write(dir: string, rel: string, text: string): string {
  const p = path.join(dir, rel);
  mkdirSync(path.dirname(p), { recursive: true });
  writeFileSync(p, text);
  return p;
}

/** A small valid design that passes the default rules (no negative folded delay). */
export function passingDesign(name = 'smoke-pass'): string {
  return `format: pleat/1
name: ${name}
units:
  - { id: ADD1, kind: add, stages: 0 }
  - { id: MUL1, kind: mul, stages: 1 }
nodes:
  - { id: x, kind: input }
  - { id: m, kind: mul, coefficient: 0.5 }
  - { id: a, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: m }
  - { from: m, to: a }
  - { from: a, to: m, delays: 1, port: 1 }
  - { from: a, to: y }
folding:
  factor: 2
  sets:
    MUL1: [m]
    ADD1: [~, a]
`;
}

/** A valid design that no retiming can fix: its loop holds 3 stages in N * 1 = 2 cycles. */
export function failingDesign(name = 'smoke-fail'): string {
  return `format: pleat/1
name: ${name}
units:
  - { id: ADD1, kind: add, stages: 1 }
  - { id: MUL1, kind: mul, stages: 2 }
nodes:
  - { id: x, kind: input }
  - { id: m, kind: mul, coefficient: 0.5 }
  - { id: a, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: a }
  - { from: m, to: a, port: 1 }
  - { from: a, to: m, delays: 1 }
  - { from: a, to: y }
folding:
  factor: 2
  sets:
    ADD1: [a]
    MUL1: [~, m]
`;
}

/** An invalid design: an edge names a node that does not exist (line 9, `from` value at column 11). */
export function invalidDesign(name = 'smoke-invalid'): string {
  return `format: pleat/1
name: ${name}
units:
  - { id: ADD1, kind: add, stages: 0 }
nodes:
  - { id: x, kind: input }
  - { id: y, kind: output }
edges:
  - { from: ghost, to: y }
folding:
  factor: 1
  sets: {}
`;
}
