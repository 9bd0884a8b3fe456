#!/usr/bin/env node
// `npm run bench`: speed and memory of `pleat check` against baselines measured in the same run.
//  - end to end: `pleat check FILE --format json --output /dev/null` on generated designs of
//    1,000, 10,000 and 100,000 edges, against the bare YAML load of the same file with js-yaml
//    (the fastest YAML reader on the registry for this input) in a fresh node process; the same
//    designs written as JSON (.fold.json) against a bare JSON.parse; the yaml package's bare load;
//  - the engine alone, in process: loading (parse + validation) and analysis;
//  - cold start: `pleat --version` and `pleat check` of a tiny design against `node -e 0`.
// Options: --runs N (repetitions of each timed process, median kept; default 3, cold start 4x),
//          --sizes 1000,10000 (edge counts), --json FILE (also write the results as JSON).
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { load } from 'js-yaml';
import { cpus, loadavg, tmpdir, totalmem } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { parseArgs } from 'node:util';
import { generateDesign } from './gen-design.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
// node's own argument parser: an unknown or misspelt option is an error, not silently ignored.
const { values: args } = parseArgs({
  options: { runs: { type: 'string', default: '3' }, 'cold-runs': { type: 'string' }, sizes: { type: 'string', default: '1000,10000,100000' }, json: { type: 'string' } },
});
const RUNS = Number(args.runs);
const COLD_RUNS = Number(args['cold-runs'] ?? Math.max(9, RUNS * 4));
const SIZES = args.sizes.split(',').map(Number);
const JSON_OUT = args.json ?? null;

// Targets: <= 1.5x the bare load in time and memory at 100,000 edges, <= 2x below (start-up included).
const TARGETS = { timeRatio: 1.5, memRatio: 1.5, smallRatio: 2, coldRatio: 2.5 };
const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;
const work = mkdtempSync(path.join(tmpdir(), 'pleat-bench-'));
const node = process.execPath;

/**
 * Runs a command once: wall seconds (measured here), CPU seconds (user + system) and peak RSS in
 * MB (both from the child). CPU time is reported too because it suffers much less than wall
 * time when other work shares the machine.
 */
function measure(args, env = {}) {
  const rssFile = path.join(work, `rss-${process.pid}.txt`);
  let cmd;
  let cmdArgs;
  if (TIME) {
    cmd = TIME;
    cmdArgs = ['-f', '%M %U %S', '-o', rssFile, node, ...args];
  } else {
    // Without GNU time: a preload script reports the child's own peak RSS when it exits.
    const preload = path.join(work, 'rss-preload.cjs');
    if (!existsSync(preload)) {
      writeFileSync(
        preload,
        "process.on('exit', () => { const u = process.resourceUsage(); require('fs').writeFileSync(process.env.PLEAT_BENCH_RSS, `${u.maxRSS} ${u.userCPUTime / 1e6} ${u.systemCPUTime / 1e6}`); });\n",
      );
    }
    cmd = node;
    cmdArgs = ['-r', preload, ...args];
  }
  const t0 = process.hrtime.bigint();
  const r = spawnSync(cmd, cmdArgs, { cwd: root, env: { ...process.env, ...env, PLEAT_BENCH_RSS: rssFile }, stdio: ['ignore', 'ignore', 'pipe'], maxBuffer: 64 * 1024 * 1024 });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0 && r.status !== 1) {
    throw new Error(`${args.join(' ')} exited ${r.status}: ${String(r.stderr).slice(0, 500)}`);
  }
  // GNU time writes a note before its line when the command exits non-zero: take the last line.
  const [kb, user, sys] = readFileSync(rssFile, 'utf8').trim().split('\n').pop().trim().split(/\s+/).map(Number);
  return { wall, cpu: user + sys, rssMB: kb / 1024 };
}

function median(xs) {
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Alternates two commands run by run, so a change in machine load hits both alike. */
function paired(a, b, runs) {
  const A = { walls: [], cpus: [], rss: [] };
  const B = { walls: [], cpus: [], rss: [] };
  for (let i = 0; i < runs; i++) {
    for (const [args, acc] of i % 2 ? [[b, B], [a, A]] : [[a, A], [b, B]]) {
      const m = measure(args);
      acc.walls.push(m.wall);
      acc.cpus.push(m.cpu);
      acc.rss.push(m.rssMB);
    }
  }
  const sum = (x) => ({ wall: median(x.walls), cpu: median(x.cpus), rssMB: median(x.rss) });
  return [sum(A), sum(B)];
}

function fmt(x, d = 2) {
  return x.toFixed(d);
}

async function main() {
  const loadBefore = loadavg()[0];
  console.log('pleat bench: building the CLI');
  const b = spawnSync(node, ['scripts/build.mjs', '--cli-only'], { cwd: root, stdio: 'inherit' });
  if (b.status !== 0) process.exit(b.status ?? 1);

  // The engine bundled for in-process timing (the same sources as the CLI).
  const esbuild = await import('esbuild');
  await esbuild.build({
    absWorkingDir: root,
    entryPoints: { load: 'shared/design/load.ts', analyze: 'shared/analysis/analyze.ts' },
    outdir: path.join(work, 'engine'),
    bundle: true,
    splitting: true,
    format: 'esm',
    platform: 'node',
    logLevel: 'warning',
    outExtension: { '.js': '.mjs' },
    // The yaml package is CommonJS and requires node built-ins: give the ES module a require.
    banner: { js: "import { createRequire as __benchRequire } from 'node:module'; const require = __benchRequire(import.meta.url);" },
  });
  const { loadDesign } = await import(pathToFileURL(path.join(work, 'engine/load.mjs')).href);
  const { analyze } = await import(pathToFileURL(path.join(work, 'engine/analyze.mjs')).href);

  // Bare loads: a fresh node process that reads the file with one loader and does nothing else.
  const bareScript = path.join(work, 'bare-load.mjs');
  writeFileSync(
    bareScript,
    `import { readFileSync } from 'node:fs';\nimport { load } from ${JSON.stringify(pathToFileURL(path.join(root, 'node_modules/js-yaml/dist/js-yaml.mjs')).href)};\nload(readFileSync(process.argv[2], 'utf8'));\n`,
  );
  const bareYamlPkg = path.join(work, 'bare-yaml-package.mjs');
  writeFileSync(
    bareYamlPkg,
    `import { readFileSync } from 'node:fs';\nimport { parse } from ${JSON.stringify(pathToFileURL(path.join(root, 'node_modules/yaml/dist/index.js')).href)};\nparse(readFileSync(process.argv[2], 'utf8'), { maxAliasCount: -1 });\n`,
  );
  const bareJson = path.join(work, 'bare-json.mjs');
  writeFileSync(bareJson, `import { readFileSync } from 'node:fs';\nJSON.parse(readFileSync(process.argv[2], 'utf8'));\n`);
  const jsYamlVersion = JSON.parse(readFileSync(path.join(root, 'node_modules/js-yaml/package.json'), 'utf8')).version;
  const yamlVersion = JSON.parse(readFileSync(path.join(root, 'node_modules/yaml/package.json'), 'utf8')).version;

  const rows = [];
  for (const edges of SIZES) {
    const g = generateDesign({ edges, seed: 7, name: `bench-${edges}` });
    const file = path.join(work, `bench-${edges}.fold.yaml`);
    writeFileSync(file, g.text);
    process.stdout.write(`  ${g.edges} edges (${(g.text.length / 1e6).toFixed(1)} MB): `);

    const [e2e, bare] = paired(['bin/pleat.js', 'check', file, '--format', 'json', '--output', '/dev/null'], [bareScript, file], RUNS);
    // The same design written as JSON: check of the .fold.json against a bare JSON.parse.
    const jsonFile = path.join(work, `bench-${edges}.fold.json`);
    writeFileSync(jsonFile, `${JSON.stringify(load(g.text), null, 1)}\n`);
    const [e2eJson, bareJ] = paired(['bin/pleat.js', 'check', jsonFile, '--format', 'json', '--output', '/dev/null'], [bareJson, jsonFile], RUNS);
    // The other YAML loader of the registry, for the choice of loader (docs/performance.md).
    const [bareOther] = paired([bareYamlPkg, file], [bareScript, file], 1);

    // In process: the best of a few runs, with the code already compiled by the JIT. (A CLI
    // run is a first run: it pays for compiling too, which the end-to-end numbers include.)
    const text = readFileSync(file, 'utf8');
    let loadMs = Infinity;
    let analyzeMs = Infinity;
    let status = '';
    for (let i = 0; i < Math.max(3, RUNS); i++) {
      const t0 = performance.now();
      const loaded = loadDesign(text);
      const t1 = performance.now();
      if (!loaded.design) throw new Error(`generated design is invalid: ${JSON.stringify(loaded.diagnostics.slice(0, 3))}`);
      const a = analyze(loaded.design);
      const t2 = performance.now();
      loadMs = Math.min(loadMs, t1 - t0);
      analyzeMs = Math.min(analyzeMs, t2 - t1);
      status = a.retiming.feasible ? (a.retiming.needed ? 'retimed' : 'no retiming needed') : 'INFEASIBLE';
    }
    // Where one real run spends its time (the CLI's own phase timer).
    const phased = spawnSync(node, ['bin/pleat.js', 'check', file, '--format', 'json', '--output', '/dev/null'], {
      cwd: root,
      env: { ...process.env, PLEAT_TIMING: '1' },
      encoding: 'utf8',
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    const phases = [...String(phased.stderr).matchAll(/^pleat timing:\s+([\d.]+) ms\s+(.+)$/gm)].map((m) => ({
      ms: Number(m[1]),
      what: m[2].replace(/^.*\.fold\.yaml: /, 'design '),
    }));

    const row = {
      phases,
      edges: g.edges,
      nodes: g.nodes,
      bytes: Buffer.byteLength(g.text),
      e2eSeconds: e2e.wall,
      e2eCpuSeconds: e2e.cpu,
      e2eRssMB: e2e.rssMB,
      bareSeconds: bare.wall,
      bareCpuSeconds: bare.cpu,
      bareRssMB: bare.rssMB,
      loadMs,
      analyzeMs,
      timeRatio: e2e.wall / bare.wall,
      cpuRatio: e2e.cpu / bare.cpu,
      memRatio: e2e.rssMB / bare.rssMB,
      retiming: status,
      json: { bytes: statSync(jsonFile).size, e2eSeconds: e2eJson.wall, e2eCpuSeconds: e2eJson.cpu, e2eRssMB: e2eJson.rssMB, bareSeconds: bareJ.wall, bareCpuSeconds: bareJ.cpu, bareRssMB: bareJ.rssMB, timeRatio: e2eJson.wall / bareJ.wall, cpuRatio: e2eJson.cpu / bareJ.cpu, memRatio: e2eJson.rssMB / bareJ.rssMB },
      yamlPackage: { seconds: bareOther.wall, cpuSeconds: bareOther.cpu, rssMB: bareOther.rssMB, cpuRatioToJsYaml: bareOther.cpu / bare.cpu, memRatioToJsYaml: bareOther.rssMB / bare.rssMB },
    };
    rows.push(row);
    console.log(`check ${fmt(row.e2eSeconds)} s, bare load ${fmt(row.bareSeconds)} s`);
  }

  // Cold start.
  const tiny = path.join(work, 'tiny.fold.yaml');
  writeFileSync(tiny, readFileSync(path.join(root, 'examples/sensor-frontend.fold.yaml'), 'utf8'));
  const [nodeCold, versionCold] = paired(['-e', '0'], ['bin/pleat.js', '--version'], COLD_RUNS);
  const [nodeCold2, checkCold] = paired(['-e', '0'], ['bin/pleat.js', 'check', tiny, '--no-color'], COLD_RUNS);
  const base = median([nodeCold.wall, nodeCold2.wall]);
  const cold = {
    nodeSeconds: base,
    versionSeconds: versionCold.wall,
    checkSeconds: checkCold.wall,
    versionRatio: versionCold.wall / nodeCold.wall,
    checkRatio: checkCold.wall / nodeCold2.wall,
    nodeCpu: median([nodeCold.cpu, nodeCold2.cpu]),
    versionCpu: versionCold.cpu,
    checkCpu: checkCold.cpu,
    versionCpuRatio: versionCold.cpu / nodeCold.cpu,
    checkCpuRatio: checkCold.cpu / nodeCold2.cpu,
  };

  const mark = (ok) => (ok ? 'ok' : 'MISSED');
  const lines = [];
  lines.push('');
  lines.push(`| edges | file | check wall (s) | check CPU (s) | check peak RSS (MB) | bare load wall (s) | bare CPU (s) | bare peak RSS (MB) | wall ratio | CPU ratio | memory ratio | engine, warm: load (ms) | engine, warm: analysis (ms) | retiming |`);
  lines.push('| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- |');
  for (const r of rows) {
    lines.push(
      `| ${r.edges.toLocaleString('en-US')} | ${(r.bytes / 1e6).toFixed(2)} MB | ${fmt(r.e2eSeconds)} | ${fmt(r.e2eCpuSeconds)} | ${fmt(r.e2eRssMB, 0)} | ${fmt(r.bareSeconds)} | ${fmt(r.bareCpuSeconds)} | ${fmt(r.bareRssMB, 0)} | ${fmt(r.timeRatio)} | ${fmt(r.cpuRatio)} | ${fmt(r.memRatio)} | ${fmt(r.loadMs, 0)} | ${fmt(r.analyzeMs, 0)} | ${r.retiming} |`,
    );
  }
  lines.push('');
  lines.push('| edges | .fold.json | check wall (s) | check CPU (s) | check peak RSS (MB) | bare JSON.parse wall (s) | bare CPU (s) | bare peak RSS (MB) | wall ratio | CPU ratio | memory ratio | bare load by the yaml package: CPU (s), ratio to js-yaml | its peak RSS (MB), ratio |');
  lines.push('| ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |');
  for (const r of rows) {
    const j = r.json;
    const y = r.yamlPackage;
    lines.push(
      `| ${r.edges.toLocaleString('en-US')} | ${(j.bytes / 1e6).toFixed(2)} MB | ${fmt(j.e2eSeconds)} | ${fmt(j.e2eCpuSeconds)} | ${fmt(j.e2eRssMB, 0)} | ${fmt(j.bareSeconds)} | ${fmt(j.bareCpuSeconds)} | ${fmt(j.bareRssMB, 0)} | ${fmt(j.timeRatio)} | ${fmt(j.cpuRatio)} | ${fmt(j.memRatio)} | ${fmt(y.cpuSeconds)}, ${fmt(y.cpuRatioToJsYaml)}x | ${fmt(y.rssMB, 0)}, ${fmt(y.memRatioToJsYaml)}x |`,
    );
  }
  lines.push(`loaders: js-yaml ${jsYamlVersion} (the baseline of the first table and the engine's YAML reader), yaml ${yamlVersion}, JSON.parse of node ${process.version}`);
  const last = rows[rows.length - 1];
  if (last?.phases.length) {
    lines.push('');
    lines.push(`| one \`pleat check\` run at ${last.edges.toLocaleString('en-US')} edges (PLEAT_TIMING=1) | ms |`);
    lines.push('| --- | ---: |');
    for (const p of last.phases) lines.push(`| ${p.what} | ${fmt(p.ms, 0)} |`);
  }
  lines.push('');
  lines.push('| cold start (median) | wall (s) | ratio to `node -e 0` | CPU (s) | CPU ratio |');
  lines.push('| --- | ---: | ---: | ---: | ---: |');
  lines.push(`| \`node -e 0\` | ${fmt(cold.nodeSeconds, 3)} | 1.00 | ${fmt(cold.nodeCpu, 3)} | 1.00 |`);
  lines.push(`| \`pleat --version\` | ${fmt(cold.versionSeconds, 3)} | ${fmt(cold.versionRatio)} | ${fmt(cold.versionCpu, 3)} | ${fmt(cold.versionCpuRatio)} |`);
  lines.push(`| \`pleat check\` (one small design) | ${fmt(cold.checkSeconds, 3)} | ${fmt(cold.checkRatio)} | ${fmt(cold.checkCpu, 3)} | ${fmt(cold.checkCpuRatio)} |`);
  lines.push('');
  const largest = rows[rows.length - 1];
  if (largest) {
    lines.push(`target: check time <= ${TARGETS.timeRatio}x bare load at ${largest.edges.toLocaleString('en-US')} edges: ${fmt(largest.timeRatio)}x wall ${mark(largest.timeRatio <= TARGETS.timeRatio)} (CPU ${fmt(largest.cpuRatio)}x)`);
    lines.push(`target: check memory <= ${TARGETS.memRatio}x bare load: ${fmt(largest.memRatio)}x ${mark(largest.memRatio <= TARGETS.memRatio)}`);
  }
  for (const r of rows.slice(0, -1)) {
    lines.push(`target: check time <= ${TARGETS.smallRatio}x bare load at ${r.edges.toLocaleString('en-US')} edges: ${fmt(r.timeRatio)}x wall ${mark(r.timeRatio <= TARGETS.smallRatio)} (CPU ${fmt(r.cpuRatio)}x), memory ${fmt(r.memRatio)}x ${mark(r.memRatio <= TARGETS.smallRatio)}`);
  }
  lines.push(`target: cold start <= ${TARGETS.coldRatio}x node -e 0: --version ${fmt(cold.versionRatio)}x ${mark(cold.versionRatio <= TARGETS.coldRatio)}, check ${fmt(cold.checkRatio)}x ${mark(cold.checkRatio <= TARGETS.coldRatio)}`);
  lines.push(`machine: ${cpus().length} x ${cpus()[0]?.model ?? 'unknown CPU'}, ${(totalmem() / 2 ** 30).toFixed(0)} GiB, node ${process.version}; runs: ${RUNS} per size, ${COLD_RUNS} per cold start; peak RSS by ${TIME ? 'GNU time' : 'process.resourceUsage'}; load average ${loadBefore.toFixed(1)} before, ${loadavg()[0].toFixed(1)} after`);
  console.log(lines.join('\n'));

  if (JSON_OUT) {
    writeFileSync(JSON_OUT, `${JSON.stringify({ date: new Date().toISOString(), node: process.version, cpus: cpus().length, loadBefore, loadAfter: loadavg()[0], rows, cold }, null, 2)}\n`);
  }
  rmSync(work, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(`pleat bench: ${err.message}`);
  rmSync(work, { recursive: true, force: true });
  process.exit(1);
});
