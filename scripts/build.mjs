#!/usr/bin/env node
// Builds what ships: the `pleat` CLI bundled by esbuild into dist/cli/, and (unless --cli-only)
// the server into dist/server/ (esbuild; npm packages stay external) and the web app with vite
// into dist/web/. Run by `npm run build` and, with --cli-only, by npm's "prepare" step so
// `npx pleat` works right after `npm install`; --server-only rebuilds just the server.
import { existsSync, mkdirSync, rmSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { devNull } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const args = new Set(process.argv.slice(2));
const cliOnly = args.has('--cli-only');
const serverOnly = args.has('--server-only');
const analyze = args.has('--analyze');

// Options of the design validator in shared/design/validate.ts. The shim below uses the precompiled
// validator only when the engine asks for exactly these; anything else compiles at run time.
const VALIDATOR_OPTIONS = { allErrors: true, strict: true };

/**
 * Compiling the design schema with ajv costs about 150 ms at every start (ajv compiles the
 * meta-schema too). Instead the build compiles it once to standalone code (ajv's documented
 * standalone mode), and a small shim hands that function to the engine's `new Ajv().compile()`.
 * Any other schema or options fall back to the real ajv, loaded from node_modules when needed.
 */
async function ajvPrecompilePlugin(esbuild) {
  const schemaBundle = await esbuild.build({
    absWorkingDir: root,
    entryPoints: ['shared/design/schema.ts'],
    bundle: true,
    write: false,
    format: 'esm',
    platform: 'neutral',
    logLevel: 'silent',
  });
  const schemaModule = await import(`data:text/javascript;base64,${Buffer.from(schemaBundle.outputFiles[0].text).toString('base64')}`);
  const { Ajv } = await import('ajv');
  const standaloneCode = (await import('ajv/dist/standalone/index.js')).default;
  const ajv = new Ajv({ ...VALIDATOR_OPTIONS, code: { source: true, esm: true } });
  const validatorCode = standaloneCode(ajv, ajv.compile(schemaModule.designSchema));
  const schemaFile = path.join(root, 'shared/design/schema.ts');

  const shim = `
import precompiled from 'pleat-ajv:validator';
import { designSchema } from ${JSON.stringify(schemaFile)};
const PRE = ${JSON.stringify(JSON.stringify(VALIDATOR_OPTIONS))};
let Real = null;
function real() {
  // Loaded only for a schema or options the build did not precompile.
  // (The bundle is a CommonJS script: its require resolves from dist/cli/ as node_modules does.)
  if (!Real) Real = require('ajv').Ajv;
  return Real;
}
export function Ajv(opts) {
  let inst = null;
  const get = () => inst || (inst = new (real())(opts));
  const compile = (schema, meta) =>
    schema === designSchema && JSON.stringify(opts ?? {}) === PRE && meta === undefined ? precompiled : get().compile(schema, meta);
  return new Proxy({}, { get: (_t, k) => (k === 'compile' ? compile : (typeof get()[k] === 'function' ? get()[k].bind(get()) : get()[k])) });
}
export default Ajv;
`;
  return {
    name: 'pleat-ajv-precompile',
    setup(build) {
      build.onResolve({ filter: /^ajv$/ }, (args) =>
        args.importer.startsWith(path.join(root, 'shared') + path.sep) ? { path: 'shim', namespace: 'pleat-ajv' } : undefined,
      );
      build.onResolve({ filter: /^pleat-ajv:validator$/ }, () => ({ path: 'validator', namespace: 'pleat-ajv' }));
      build.onLoad({ filter: /.*/, namespace: 'pleat-ajv' }, (args) =>
        args.path === 'shim'
          ? { contents: shim, loader: 'js', resolveDir: root }
          : { contents: validatorCode, loader: 'js', resolveDir: root },
      );
    },
  };
}

async function buildCli() {
  let esbuild;
  try {
    esbuild = await import('esbuild');
  } catch {
    // Installed without dev dependencies (npm install --omit=dev): nothing can be built here.
    if (existsSync(path.join(root, 'dist/cli/pleat.cjs'))) return;
    console.error('pleat build: esbuild is not installed; run `npm install` with dev dependencies');
    // Under npm's "prepare" step a failure would abort the whole install; the CLI then says
    // how to build it when started.
    process.exit(cliOnly ? 0 : 1);
  }
  const outdir = path.join(root, 'dist/cli');
  const bundle = path.join(outdir, 'pleat.cjs');
  const t0 = Date.now();
  const result = await esbuild.build({
    absWorkingDir: root,
    entryPoints: ['cli/main.ts'],
    outfile: bundle,
    bundle: true,
    // One CommonJS script, no chunks: bin/pleat.js compiles it with V8's code cache (vm.Script
    // cachedData; an ES module cannot take one on Node 20), which saves the parse and compile of
    // every function a check runs. Modules a command does not need are still only initialised
    // when it imports them (esbuild keeps each dynamic import() lazy), so --version stays quick.
    format: 'cjs',
    platform: 'node',
    target: 'node20',
    minify: !args.has('--no-minify'),
    sourcemap: false,
    metafile: true,
    write: false,
    logLevel: 'warning',
    plugins: [await ajvPrecompilePlugin(esbuild)],
    // import.meta.url (createRequire of the solver's WebAssembly) is the bundle's own file URL.
    define: { 'import.meta.url': '__pleatUrl' },
    // "use strict" first: the sources are ES modules and were always run as strict code.
    banner: { js: `"use strict";var __pleatUrl=require("node:url").pathToFileURL(__filename).href;` },
  });
  const [out] = result.outputFiles;
  mkdirSync(outdir, { recursive: true });
  // The old cache goes first: V8 checks a cache only against the script's length, so one made for
  // another bundle of the same length would be taken. The bundle is renamed into place, so a
  // `pleat` starting while the build runs reads either the old file or the new one, whole.
  rmSync(path.join(outdir, 'pleat.cache'), { force: true });
  writeFileSync(`${bundle}.tmp`, out.contents);
  renameSync(`${bundle}.tmp`, bundle);
  // What earlier builds left: the ES module entry and its chunks.
  rmSync(path.join(outdir, 'chunks'), { recursive: true, force: true });
  rmSync(path.join(outdir, 'pleat.js'), { force: true });
  const cache = writeCodeCache(outdir);
  const kib = (n) => `${(n / 1024).toFixed(0)} KiB`;
  console.log(`pleat build: CLI -> dist/cli/pleat.cjs (${kib(out.contents.length)}${cache ? `, code cache ${kib(cache)}` : ', no code cache'}) in ${Date.now() - t0} ms`);
  if (analyze) console.log(await esbuild.analyzeMetafile(result.metafile));
}

/**
 * The code cache (dist/cli/pleat.cache) is taken from a real run: `pleat check` of the examples,
 * whose loader writes V8's cached data of the bundle at exit, with the bytecode of every function
 * that run compiled. Returns its size, or 0 when it could not be made (the CLI then compiles
 * as usual and writes the cache itself on its first run where dist/cli is writable).
 */
function writeCodeCache(outdir) {
  const r = spawnSync(process.execPath, [path.join(root, 'bin/pleat.js'), 'check', '--format', 'json', '--output', devNull], {
    cwd: path.join(root, 'examples'),
    env: { ...process.env, PLEAT_CODE_CACHE: 'write', NO_COLOR: '1' },
    stdio: ['ignore', 'ignore', 'pipe'],
    encoding: 'utf8',
  });
  const file = path.join(outdir, 'pleat.cache');
  // Exit 1 is expected: one example fails its rules on purpose.
  if ((r.status === 0 || r.status === 1) && existsSync(file)) return statSync(file).size;
  console.warn(`pleat build: no code cache (the examples' check exited ${r.status}: ${String(r.stderr).trim().split('\n')[0]})`);
  return 0;
}

/** The server never runs through a TypeScript loader in start-up or benchmarks: one ESM bundle. */
async function buildServer() {
  const { build } = await import('esbuild');
  await build({
    absWorkingDir: root,
    // The analysis pool's worker thread is a second entry (server/analyzePool.ts loads it).
    entryPoints: { main: 'server/main.ts', 'analyze-worker': 'server/analyze-worker.ts' },
    outdir: 'dist/server',
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    packages: 'external',
    sourcemap: true,
    logLevel: 'warning',
  });
  console.log('pleat build: server -> dist/server/main.js, dist/server/analyze-worker.js');
}

function buildWeb() {
  if (!existsSync(path.join(root, 'src/main.tsx'))) {
    console.log('pleat build: no src/main.tsx yet, web app skipped');
    return;
  }
  const vite = path.join(root, 'node_modules/vite/bin/vite.js');
  const r = spawnSync(process.execPath, [vite, 'build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) process.exit(r.status ?? 1);
  console.log('pleat build: web app -> dist/web/');
}

if (serverOnly) {
  await buildServer();
} else {
  await buildCli();
  if (!cliOnly) {
    await buildServer();
    buildWeb();
  }
}
