#!/usr/bin/env node
// The weight of the web app's first page: the gzip size of the entry chunk that index.html loads,
// and of everything the first page needs before it can draw (entry, its preloaded chunks, CSS).
// Baseline, measured in the same run with the same Vite: a bare React 19 page that renders one
// line (react + react-dom only), the floor of any React app.
//
//   node scripts/bench-web.mjs [--no-build] [--json FILE]
// `npm run bench` calls it; without --no-build it builds dist/web first when it is missing.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { gzipSync } from 'node:zlib';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const vite = path.join(root, 'node_modules', 'vite', 'bin', 'vite.js');

function gz(file) {
  const buf = readFileSync(file);
  return { raw: buf.length, gzip: gzipSync(buf, { level: 9 }).length };
}

/** Reads a built index.html: the entry script, the chunks it preloads and the stylesheets. */
export function firstPage(outDir) {
  const html = readFileSync(path.join(outDir, 'index.html'), 'utf8');
  const attr = (re) => [...html.matchAll(re)].map((m) => m[1]);
  const entry = attr(/<script[^>]*type="module"[^>]*src="([^"]+)"/g)[0];
  if (!entry) throw new Error(`no module script in ${outDir}/index.html`);
  const preloads = attr(/<link[^>]*rel="modulepreload"[^>]*href="([^"]+)"/g);
  const css = attr(/<link[^>]*rel="stylesheet"[^>]*href="([^"]+)"/g);
  const file = (url) => path.join(outDir, url.replace(/^\//, '').replace(/^\.\//, ''));
  const e = gz(file(entry));
  const rest = [...preloads, ...css].map((u) => ({ url: u, ...gz(file(u)) }));
  return {
    entry: { url: entry, ...e },
    preloads: rest.filter((r) => !r.url.endsWith('.css')),
    css: rest.filter((r) => r.url.endsWith('.css')),
    firstPageGzip: e.gzip + rest.reduce((s, r) => s + r.gzip, 0),
    firstPageJsGzip: e.gzip + rest.filter((r) => !r.url.endsWith('.css')).reduce((s, r) => s + r.gzip, 0),
  };
}

function viteBuild(args, cwd = root) {
  const r = spawnSync(process.execPath, [vite, 'build', '--logLevel', 'error', ...args], { cwd, stdio: ['ignore', 'ignore', 'inherit'] });
  if (r.status !== 0) throw new Error(`vite build failed (${args.join(' ')})`);
}

/** A one-line React page built by the same Vite: the smallest first page React allows. */
function baseline() {
  const dir = path.join(root, 'bench-out', 'react-floor');
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  writeFileSync(path.join(dir, 'index.html'), '<!doctype html><div id="root"></div><script type="module" src="./main.jsx"></script>\n');
  writeFileSync(
    path.join(dir, 'main.jsx'),
    "import { createRoot } from 'react-dom/client';\ncreateRoot(document.getElementById('root')).render(<p>floor</p>);\n",
  );
  writeFileSync(
    path.join(dir, 'vite.config.mjs'),
    `import react from ${JSON.stringify(pathToFileURL(path.join(root, 'node_modules/@vitejs/plugin-react/dist/index.js')).href)};\nexport default { root: ${JSON.stringify(dir)}, plugins: [react()], logLevel: 'error', build: { outDir: 'dist', emptyOutDir: true } };\n`,
  );
  viteBuild(['--config', path.join(dir, 'vite.config.mjs')], dir);
  return firstPage(path.join(dir, 'dist'));
}

export function benchWeb({ build = true } = {}) {
  const out = path.join(root, 'dist', 'web');
  if (build && !existsSync(path.join(out, 'index.html'))) viteBuild([]);
  const app = firstPage(out);
  const floor = baseline();
  return { app, floor, ratio: app.firstPageJsGzip / floor.firstPageJsGzip };
}

const kib = (n) => `${(n / 1024).toFixed(1)} KiB`;

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const { values: args } = parseArgs({ options: { json: { type: 'string' }, 'no-build': { type: 'boolean', default: false } } });
  const r = benchWeb({ build: !args['no-build'] });
  console.log('web app, first page (gzip -9)');
  console.log(`  entry chunk ${r.app.entry.url}: ${kib(r.app.entry.gzip)} gzip (${kib(r.app.entry.raw)} raw)`);
  for (const p of r.app.preloads) console.log(`  preloaded ${p.url}: ${kib(p.gzip)} gzip`);
  for (const c of r.app.css) console.log(`  stylesheet ${c.url}: ${kib(c.gzip)} gzip`);
  console.log(`  JavaScript before the first page draws: ${kib(r.app.firstPageJsGzip)} gzip; with CSS ${kib(r.app.firstPageGzip)}`);
  console.log(`  baseline, a bare React 19 page (react + react-dom) built the same way: ${kib(r.floor.firstPageJsGzip)} gzip`);
  console.log(`  ratio to the baseline: ${r.ratio.toFixed(2)}x`);
  if (args.json !== undefined) writeFileSync(args.json, JSON.stringify(r, null, 2) + '\n');
}
