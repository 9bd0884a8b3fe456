#!/usr/bin/env node
// Part of `npm run bench`: speed of `pleat plan` as ratios to `pleat check` in the same run.
//  - heuristic: `pleat plan` of a generated design of about 100,000 edges with its folding sets
//    taken out, against `pleat check` of the same design with the sets the generator wrote;
//  - exact: `pleat plan` of a 30-operation design at N = 4 (small enough for the mixed-integer
//    model), against `pleat check` of the planned file it wrote.
// Ratios only, no pass or fail. Options: --runs N (median of N paired runs; default 1 for the
// large design, 3 for the small one), --edges E (size of the large design), --json FILE.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import { generateDesign } from './gen-design.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const { values: args } = parseArgs({ options: { runs: { type: 'string' }, edges: { type: 'string', default: '100000' }, json: { type: 'string' } } });
const RUNS = args.runs ?? null;
const EDGES = Number(args.edges);
const JSON_OUT = args.json ?? null;
const work = mkdtempSync(path.join(tmpdir(), 'pleat-bench-plan-'));
const node = process.execPath;

/** One run: wall seconds, and CPU seconds and peak RSS that the child reports at exit (a preload, as scripts/bench.mjs does without GNU time). */
function measureCpu(args) {
  const out = path.join(work, `usage-${process.pid}.json`);
  const preload = path.join(work, 'usage.cjs');
  writeFileSync(preload, "process.on('exit', () => { const u = process.resourceUsage(); require('fs').writeFileSync(process.env.PLEAT_BENCH_USAGE, JSON.stringify({ cpu: (u.userCPUTime + u.systemCPUTime) / 1e6, rssMB: u.maxRSS / 1024 })); });\n");
  const t0 = process.hrtime.bigint();
  const r = spawnSync(node, ['-r', preload, ...args], { cwd: root, env: { ...process.env, PLEAT_BENCH_USAGE: out }, stdio: ['ignore', 'ignore', 'pipe'], maxBuffer: 1 << 30 });
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0 && r.status !== 1) throw new Error(`${args.join(' ')} exited ${r.status}: ${String(r.stderr).slice(0, 400)}`);
  const u = JSON.parse(readFileSync(out, 'utf8'));
  return { wall, cpu: u.cpu, rssMB: u.rssMB, status: r.status };
}

function median(xs) {
  const s = [...xs].sort((a, b) => a - b);
  const m = Math.floor(s.length / 2);
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Alternates the two commands run by run, so a change in machine load hits both alike. */
function paired(a, b, runs) {
  const A = [];
  const B = [];
  for (let i = 0; i < runs; i++) {
    for (const [args, acc] of i % 2 ? [[b, B], [a, A]] : [[a, A], [b, B]]) acc.push(measureCpu(args));
  }
  const sum = (xs) => ({ wall: median(xs.map((x) => x.wall)), cpu: median(xs.map((x) => x.cpu)), rssMB: median(xs.map((x) => x.rssMB)) });
  return [sum(A), sum(B)];
}

/** The generator's text without its `sets:` block: the same design, asking for a plan. */
function withoutSets(text) {
  return text.replace(/^ {2}sets:\n(?: {4}.*\n?)*/m, '');
}

/**
 * A 30-operation design of our own: six cascaded sections of a seismometer de-rumble filter,
 * each with a feedback product, a gain, a trim product and two sums (12 adds, 18 multiplies).
 */
function thirtyOps() {
  const lines = [
    'format: pleat/1',
    'name: seismo-derumble-30',
    'clock_ns: 5',
    'kinds:',
    '  add: { time: 1 }',
    '  mul: { time: 1 }',
    'units:',
    ...[1, 2, 3].map((i) => `  - { id: ADD${i}, kind: add, stages: 0 }`),
    ...[1, 2, 3, 4, 5].map((i) => `  - { id: MUL${i}, kind: mul, stages: 1 }`),
    'nodes:',
    '  - { id: x, kind: input }',
  ];
  const edges = [];
  let prev = 'x';
  for (let s = 0; s < 6; s++) {
    const [a, m, g, b, t] = ['a', 'm', 'g', 'b', 't'].map((k) => `${k}${s}`);
    lines.push(`  - { id: ${a}, kind: add }`, `  - { id: ${m}, kind: mul, coefficient: 0.${9 - s} }`, `  - { id: ${g}, kind: mul, coefficient: 1.${s}5 }`, `  - { id: ${b}, kind: add }`, `  - { id: ${t}, kind: mul, coefficient: 0.5 }`);
    edges.push(`  - { from: ${prev}, to: ${a} }`, `  - { from: ${m}, to: ${a}, port: 1 }`, `  - { from: ${a}, to: ${m}, delays: 1 }`, `  - { from: ${a}, to: ${g} }`, `  - { from: ${g}, to: ${b} }`, `  - { from: ${prev}, to: ${b}, delays: 1, port: 1 }`, `  - { from: ${b}, to: ${t} }`);
    prev = `t${s}`;
  }
  lines.push('  - { id: y, kind: output }', 'edges:', ...edges, `  - { from: ${prev}, to: y }`, 'folding:', '  factor: 4', '');
  return lines.join('\n');
}

function fmt(x, d = 2) {
  return x.toFixed(d);
}

async function main() {
  const loadBefore = loadavg()[0];
  const b = spawnSync(node, ['scripts/build.mjs', '--cli-only'], { cwd: root, stdio: 'inherit' });
  if (b.status !== 0) process.exit(b.status ?? 1);
  const bin = 'bin/pleat.js';

  // 1. Heuristic on the large design.
  const g = generateDesign({ edges: EDGES, seed: 7, name: `plan-bench-${EDGES}` });
  const planned = path.join(work, 'large.fold.yaml');
  const open = path.join(work, 'large-open.fold.yaml');
  writeFileSync(planned, g.text);
  writeFileSync(open, withoutSets(g.text));
  process.stdout.write(`pleat bench (plan): heuristic, ${g.edges.toLocaleString('en-US')} edges ... `);
  const [planLarge, checkLarge] = paired(
    // The default time limit (30 s), as an engineer runs it: the heuristic improves until then.
    [bin, 'plan', open, '--format', 'json', '--out', path.join(work, 'large-planned.fold.yaml')],
    [bin, 'check', planned, '--format', 'json', '--output', '/dev/null'],
    Number(RUNS ?? 1),
  );
  const largeResult = JSON.parse(spawnSync(node, [bin, 'check', path.join(work, 'large-planned.fold.yaml'), '--format', 'json'], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 30 }).stdout).designs[0];
  console.log(`plan ${fmt(planLarge.wall)} s, check ${fmt(checkLarge.wall)} s`);

  // 2. Exact on 30 operations at N = 4; the check is of the file the plan wrote.
  const small = path.join(work, 'thirty.fold.yaml');
  const smallOut = path.join(work, 'thirty-planned.fold.yaml');
  writeFileSync(small, thirtyOps());
  process.stdout.write('pleat bench (plan): exact, 30 operations at N = 4 ... ');
  const first = spawnSync(node, [bin, 'plan', small, '--format', 'json', '--out', smallOut], { cwd: root, encoding: 'utf8' });
  const smallPlan = JSON.parse(first.stdout).designs[0];
  const [planSmall, checkSmall] = paired([bin, 'plan', small, '--format', 'json', '--out', smallOut], [bin, 'check', smallOut, '--format', 'json', '--output', '/dev/null'], Number(RUNS ?? 3));
  console.log(`plan ${fmt(planSmall.wall)} s, check ${fmt(checkSmall.wall)} s`);

  const lines = [
    '',
    '| case | plan wall (s) | plan CPU (s) | check wall (s) | check CPU (s) | wall ratio | CPU ratio | plan result |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: | --- |',
    `| heuristic, ${g.edges.toLocaleString('en-US')} edges (vs check with the generator's sets) | ${fmt(planLarge.wall)} | ${fmt(planLarge.cpu)} | ${fmt(checkLarge.wall)} | ${fmt(checkLarge.cpu)} | ${fmt(planLarge.wall / checkLarge.wall)} | ${fmt(planLarge.cpu / checkLarge.cpu)} | check of the plan: ${largeResult.status}, regs ${largeResult.registers?.minimum ?? '-'} |`,
    `| exact, 30 operations, N = 4 (vs check of the planned file) | ${fmt(planSmall.wall)} | ${fmt(planSmall.cpu)} | ${fmt(checkSmall.wall)} | ${fmt(checkSmall.cpu)} | ${fmt(planSmall.wall / checkSmall.wall)} | ${fmt(planSmall.cpu / checkSmall.cpu)} | ${smallPlan.status}${smallPlan.status === 'feasible' ? ` (gap ${smallPlan.gapPercent}%)` : ''}, ${smallPlan.method} |`,
    '',
    `machine: ${cpus().length} x ${cpus()[0]?.model ?? 'unknown CPU'}, node ${process.version}; load average ${loadBefore.toFixed(1)} before, ${loadavg()[0].toFixed(1)} after`,
  ];
  console.log(lines.join('\n'));
  if (JSON_OUT) {
    writeFileSync(JSON_OUT, `${JSON.stringify({ date: new Date().toISOString(), large: { edges: g.edges, plan: planLarge, check: checkLarge }, exact: { plan: planSmall, check: checkSmall, status: smallPlan.status, method: smallPlan.method, gapPercent: smallPlan.gapPercent } }, null, 2)}\n`);
  }
  rmSync(work, { recursive: true, force: true });
}

main().catch((err) => {
  console.error(`pleat bench (plan): ${err.message}`);
  rmSync(work, { recursive: true, force: true });
  process.exit(1);
});
