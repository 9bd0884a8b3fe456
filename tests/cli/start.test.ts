// How bin/pleat.js starts the bundle: with the V8 code cache the build wrote, without one, and
// with a cache made for another bundle or other V8 flags. Every way gives the same output, and
// a cache that cannot be used is replaced at exit. (Common practice, no source: a cache is an
// optimisation and must never change what the command does.)
import { cpSync, existsSync, readFileSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { execa } from 'execa';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { EXAMPLES, ROOT, cleanupTemps, ensureBuilt, pleat, tempDir } from './helpers';

const DESIGN = path.join(EXAMPLES, 'equaliser-retimed.fold.yaml');
const ARGS = ['check', DESIGN, '--format', 'json', '--no-color'];

/** A copy of bin/ and dist/cli/ of its own, so its cache can be changed without touching the tests' build. */
function copyOfCli(): string {
  const dir = tempDir('pleat-start-');
  cpSync(path.join(ROOT, 'bin'), path.join(dir, 'bin'), { recursive: true });
  cpSync(path.join(ROOT, 'dist/cli'), path.join(dir, 'dist/cli'), { recursive: true, preserveTimestamps: true });
  return dir;
}

async function run(dir: string, nodeArgs: string[] = [], env: Record<string, string> = {}) {
  const r = await execa(process.execPath, [...nodeArgs, path.join(dir, 'bin/pleat.js'), ...ARGS], { cwd: ROOT, env: { ...env, NO_COLOR: '1' }, reject: false, stripFinalNewline: false });
  return { exitCode: r.exitCode, stdout: String(r.stdout), stderr: String(r.stderr) };
}

describe('start-up with the code cache', () => {
  let expected: { exitCode: number; stdout: string; stderr: string };
  beforeAll(async () => {
    await ensureBuilt();
    expected = await pleat(ARGS, { env: { PLEAT_CODE_CACHE: '0' } });
    expect(expected.exitCode).toBe(0);
  }, 180_000);
  afterAll(cleanupTemps);

  it('the build leaves the bundle and its cache', () => {
    expect(existsSync(path.join(ROOT, 'dist/cli/pleat.cjs'))).toBe(true);
    expect(readFileSync(path.join(ROOT, 'dist/cli/pleat.cache')).toString('latin1', 0, 17)).toBe('pleat-code-cache ');
  });

  it('gives the same output with the cache as without it', async () => {
    const withCache = await pleat(ARGS);
    expect(withCache).toEqual(expected);
  });

  it('ignores a cache made for another bundle and writes a new one', async () => {
    const dir = copyOfCli();
    const cache = path.join(dir, 'dist/cli/pleat.cache');
    const bundle = path.join(dir, 'dist/cli/pleat.cjs');
    // The same bundle touched: its cache no longer names it.
    const later = new Date(statSync(bundle).mtimeMs + 5_000);
    utimesSync(bundle, later, later);
    expect(await run(dir)).toEqual(expected);
    const head = readFileSync(cache).toString('latin1', 0, 80).split('\n')[0];
    expect(head).toBe(`pleat-code-cache 1 ${statSync(bundle).size} ${statSync(bundle).mtimeMs}`);
    expect(await run(dir)).toEqual(expected);
  });

  it('runs when V8 refuses the cache (other flags), and when there is none', async () => {
    const dir = copyOfCli();
    const cache = path.join(dir, 'dist/cli/pleat.cache');
    // A cache written under other V8 flags: V8 refuses it in a run without them.
    expect(await run(dir, ['--max-old-space-size=3000'], { PLEAT_CODE_CACHE: 'write' })).toEqual(expected);
    const flagged = readFileSync(cache);
    expect(await run(dir)).toEqual(expected);
    expect(readFileSync(cache).equals(flagged)).toBe(false);
    rmSync(cache);
    expect(await run(dir)).toEqual(expected);
    expect(existsSync(cache)).toBe(true);
    // A cache file cut short, or of another format, is not read at all.
    writeFileSync(cache, 'pleat-code-cache 1 0 0\n');
    expect(await run(dir)).toEqual(expected);
  });

  it('says how to build when the bundle is missing', async () => {
    const dir = copyOfCli();
    rmSync(path.join(dir, 'dist/cli/pleat.cjs'));
    const r = await run(dir);
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toBe('pleat: the CLI is not built yet; run `npm run build` (or `npm install`) first.\n');
  });
});
