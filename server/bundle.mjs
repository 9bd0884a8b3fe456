#!/usr/bin/env node
// Bundles the server (server/ and the shared/ engine it uses) into dist/server/main.js with
// esbuild; npm packages stay external and load from node_modules. Started by scripts/start.sh
// and the server benchmark, so the server never runs through a TypeScript loader there.
import { fileURLToPath } from 'node:url';
import path from 'node:path';
import { build } from 'esbuild';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
await build({
  absWorkingDir: root,
  entryPoints: ['server/main.ts'],
  outfile: 'dist/server/main.js',
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  packages: 'external',
  sourcemap: true,
  logLevel: 'warning',
});
