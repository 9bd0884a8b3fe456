#!/usr/bin/env node
// `npm run bench` (hardware part): `pleat simulate` and `pleat rtl` of a generated cascade of
// about 20,000 nodes (scripts/gen-design.mjs), each as a ratio against `pleat check` of the same
// design measured in the same run, alternately, median of the runs. Target: at most 20x check.
// Options: --runs N (default 1: one simulate and one rtl take tens of seconds), --edges E
// (default 30,000 edges, about 20,000 nodes), --json FILE (also write the results as JSON).
import { existsSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { generateDesign } from './gen-design.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const { values: args } = parseArgs({ options: { runs: { type: 'string', default: '1' }, edges: { type: 'string', default: '30000' }, json: { type: 'string' } } });
const RUNS = Number(args.runs);
const TARGET = 20;
const TIME = existsSync('/usr/bin/time') ? '/usr/bin/time' : null;
const work = mkdtempSync(path.join(tmpdir(), 'pleat-bench-hw-'));
const cli = path.join(root, 'bin', 'pleat.js');

/** One process: wall seconds, CPU seconds and peak RSS (GNU time when present, else wall only). */
function measure(cmdArgs) {
  const rssFile = path.join(work, 'rss.txt');
  const [cmd, argv] = TIME ? [TIME, ['-f', '%M %U %S', '-o', rssFile, process.execPath, ...cmdArgs]] : [process.execPath, cmdArgs];
  const t0 = process.hrtime.bigint();
  const r = spawnSync(cmd, argv, { cwd: work, stdio: ['ignore', 'ignore', 'pipe'], maxBuffer: 64 * 1024 * 1024 });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`${cmdArgs.join(' ')} exited ${r.status}: ${String(r.stderr).slice(0, 500)}`);
  if (!TIME) return { wall, cpu: null, rssMB: null };
  const [kb, user, sys] = readFileSync(rssFile, 'utf8').trim().split('\n').pop().trim().split(/\s+/).map(Number);
  return { wall, cpu: user + sys, rssMB: kb / 1024 };
}

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};

const d = generateDesign({ edges: Number(args.edges), name: 'bench-cascade' });
const file = path.join(work, 'cascade.fold.yaml');
writeFileSync(file, d.text);
const outDir = path.join(work, 'rtl');
const commands = {
  check: ['check', file, '--format', 'json', '--output', '/dev/null'],
  simulate: ['simulate', file],
  rtl: ['rtl', file, '--out', outDir],
};
const runs = { check: [], simulate: [], rtl: [] };
let rtlFiles = 0;
try {
  for (let k = 0; k < RUNS; k++) {
    for (const name of ['check', 'simulate', 'check', 'rtl']) {
      if (name === 'rtl') rmSync(outDir, { recursive: true, force: true });
      runs[name].push(measure([cli, ...commands[name]]));
      if (name === 'rtl') rtlFiles = readdirSync(outDir).filter((f) => f.endsWith('.v')).length;
    }
  }
} finally {
  rmSync(work, { recursive: true, force: true });
}
const summary = (xs) => ({
  wall: median(xs.map((x) => x.wall)),
  cpu: xs[0].cpu === null ? null : median(xs.map((x) => x.cpu)),
  rssMB: xs[0].rssMB === null ? null : median(xs.map((x) => x.rssMB)),
});
const check = summary(runs.check);
const rows = ['simulate', 'rtl'].map((name) => {
  const s = summary(runs[name]);
  return { command: name, ...s, wallRatio: s.wall / check.wall, cpuRatio: s.cpu === null ? null : s.cpu / check.cpu, memRatio: s.rssMB === null ? null : s.rssMB / check.rssMB };
});
const f = (x, n = 2) => (x === null ? '-' : x.toFixed(n));
console.log(`hardware bench: cascade of ${d.nodes} nodes, ${d.edges} edges, ${d.units} units; ${cpus().length} cores, load ${loadavg()[0].toFixed(1)}; ${RUNS} run(s), median`);
console.log(`  check     wall ${f(check.wall)} s  CPU ${f(check.cpu)} s  peak RSS ${f(check.rssMB, 0)} MB`);
for (const r of rows) {
  const ok = r.wallRatio <= TARGET || (r.cpuRatio !== null && r.cpuRatio <= TARGET);
  console.log(`  ${r.command.padEnd(9)} wall ${f(r.wall)} s  CPU ${f(r.cpu)} s  peak RSS ${f(r.rssMB, 0)} MB  ratio to check: wall ${f(r.wallRatio)}x, CPU ${f(r.cpuRatio)}x, memory ${f(r.memRatio)}x  (target <= ${TARGET}x: ${ok ? 'met' : 'missed'})`);
}
console.log(`  rtl wrote ${rtlFiles} Verilog files (unit modules shared by kind, stages and operations)`);
if (args.json) writeFileSync(args.json, `${JSON.stringify({ design: { nodes: d.nodes, edges: d.edges, units: d.units }, check, rows, rtlFiles }, null, 2)}\n`);
