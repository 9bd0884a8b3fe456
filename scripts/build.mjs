#!/usr/bin/env node
// Builds what ships: the `pleat` CLI bundled by esbuild into dist/cli/, and (unless --cli-only)
// the server into dist/server/ (esbuild; npm packages stay external) and the web app with vite
// into dist/web/. Run by `npm run build` and, with --cli-only, by npm's "prepare" step so
// `npx pleat` works right after `npm install`; --server-only rebuilds just the server.
import { existsSync, readdirSync, rmSync } from 'node:fs';
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
import { createRequire } from 'node:module';
import precompiled from 'pleat-ajv:validator';
import { designSchema } from ${JSON.stringify(schemaFile)};
const PRE = ${JSON.stringify(JSON.stringify(VALIDATOR_OPTIONS))};
let Real = null;
function real() {
  // Loaded only for a schema or options the build did not precompile.
  if (!Real) Real = createRequire(import.meta.url)('ajv').Ajv;
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
    if (existsSync(path.join(root, 'dist/cli/pleat.js'))) return;
    console.error('pleat build: esbuild is not installed; run `npm install` with dev dependencies');
    // Under npm's "prepare" step a failure would abort the whole install; the CLI then says
    // how to build it when started.
    process.exit(cliOnly ? 0 : 1);
  }
  const outdir = path.join(root, 'dist/cli');
  const t0 = Date.now();
  const result = await esbuild.build({
    absWorkingDir: root,
    entryPoints: { pleat: 'cli/main.ts' },
    outdir,
    bundle: true,
    // Chunks let the entry stay small: the engine and the report formats load when a command needs them.
    splitting: process.env.PLEAT_SPLIT !== '0',
    chunkNames: 'chunks/[name]-[hash]',
    format: 'esm',
    platform: 'node',
    target: 'node20',
    minify: !args.has('--no-minify'),
    sourcemap: false,
    metafile: true,
    logLevel: 'warning',
    plugins: [await ajvPrecompilePlugin(esbuild)],
    // Bundled CommonJS dependencies (commander) call require(); ESM output has none without this.
    banner: {
      js: "import { createRequire as __pleatRequire } from 'node:module'; const require = __pleatRequire(import.meta.url);",
    },
  });
  // Old chunks are removed after the new files are in place (not before), so a `pleat` that is
  // running while another build happens keeps working.
  const produced = new Set(Object.keys(result.metafile.outputs).map((f) => path.resolve(root, f)));
  const chunkDir = path.join(outdir, 'chunks');
  if (existsSync(chunkDir)) {
    for (const f of readdirSync(chunkDir)) {
      const abs = path.join(chunkDir, f);
      if (!produced.has(abs)) rmSync(abs, { force: true });
    }
  }
  const outputs = Object.entries(result.metafile.outputs).map(([f, o]) => ({ f: path.relative(root, f), bytes: o.bytes }));
  const total = outputs.reduce((s, o) => s + o.bytes, 0);
  console.log(`pleat build: CLI -> dist/cli/pleat.js (${outputs.length} files, ${(total / 1024).toFixed(0)} KiB) in ${Date.now() - t0} ms`);
  if (analyze) console.log(await esbuild.analyzeMetafile(result.metafile));
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
