#!/usr/bin/env node
// Starts the CLI from the bundle that `npm run build` (run by `npm install`) produced:
// dist/cli/pleat.cjs, one CommonJS script, compiled with V8's code cache beside it
// (dist/cli/pleat.cache), so a start does not parse and compile again the functions a check
// runs (docs/performance.md, "The CLI"). A cache that is missing, made for another bundle, or
// refused by V8 (another Node version or V8 flags) only costs the compile: the script then
// compiles from its text, and a fresh cache is written at exit where dist/cli is writable.
// PLEAT_CODE_CACHE=0 runs without the cache; =write (the build) always writes it anew.
import { closeSync, fstatSync, openSync, readFileSync, renameSync, rmSync, writeSync } from 'node:fs';
import { createRequire } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import vm from 'node:vm';

const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'dist', 'cli');
const bundle = path.join(dir, 'pleat.cjs');
const cacheFile = path.join(dir, 'pleat.cache');
const mode = process.env.PLEAT_CODE_CACHE;

function internalError(err) {
  process.stderr.write(`pleat: internal error: ${err && err.message ? err.message : String(err)}\n`);
  process.exit(2);
}

let source;
let key;
try {
  const fd = openSync(bundle, 'r');
  try {
    const st = fstatSync(fd);
    // The cache records which bundle it was made from: V8 itself compares only the length.
    key = `pleat-code-cache 1 ${st.size} ${st.mtimeMs}\n`;
    source = readFileSync(fd, 'utf8');
  } finally {
    closeSync(fd);
  }
} catch (err) {
  if (err && err.code === 'ENOENT') {
    process.stderr.write('pleat: the CLI is not built yet; run `npm run build` (or `npm install`) first.\n');
    process.exit(2);
  }
  internalError(err);
}

let cached;
if (mode !== '0' && mode !== 'write') {
  try {
    const data = readFileSync(cacheFile);
    const head = Buffer.byteLength(key);
    if (data.length > head && data.toString('latin1', 0, head) === key) cached = data.subarray(head);
  } catch {
    /* no cache yet */
  }
}

let script;
try {
  script = new vm.Script(`(function (exports, require, module, __filename, __dirname) {${source}\n})`, {
    filename: bundle,
    cachedData: cached,
    // The solver's WebAssembly glue imports node:module dynamically.
    importModuleDynamically: vm.constants?.USE_MAIN_CONTEXT_DEFAULT_LOADER ?? ((specifier) => import(specifier)),
  });
} catch (err) {
  internalError(err);
}

const refresh = mode === 'write' || (mode !== '0' && (cached === undefined || script.cachedDataRejected));
cached = undefined; // V8 has taken what it needs: the buffer is not kept for the whole run
if (refresh) {
  // At exit the cache holds every function this run compiled, not only the top level.
  process.once('exit', () => {
    const tmp = `${cacheFile}.${process.pid}.tmp`;
    let fd;
    try {
      fd = openSync(tmp, 'w');
    } catch {
      return; // a read-only install: run without a cache
    }
    try {
      writeSync(fd, key);
      writeSync(fd, script.createCachedData());
      closeSync(fd);
      renameSync(tmp, cacheFile);
    } catch {
      try {
        closeSync(fd);
      } catch {
        /* closed already */
      }
      rmSync(tmp, { force: true });
    }
  });
}

const module = { exports: {} };
try {
  script.runInThisContext()(module.exports, createRequire(bundle), module, bundle, dir);
} catch (err) {
  internalError(err);
}
