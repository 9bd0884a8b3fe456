#!/usr/bin/env node
// Self time per function of V8 CPU profiles (.cpuprofile, as `node --cpu-prof` writes them, e.g.
// `bench-server.mjs --cpu-prof DIR`): the functions where the samples fell, largest first, with
// their share of all samples. Usage: node scripts/cpu-profile-summary.mjs FILE_OR_DIR... [--top N]
import { readFileSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';

const { values, positionals } = parseArgs({ allowPositionals: true, options: { top: { type: 'string', default: '40' } } });
const files = positionals.flatMap((p) => (statSync(p).isDirectory() ? readdirSync(p).filter((f) => f.endsWith('.cpuprofile')).map((f) => path.join(p, f)) : [p]));
if (!files.length) throw new Error('no .cpuprofile given');
const self = new Map();
let total = 0;
for (const file of files) {
  const prof = JSON.parse(readFileSync(file, 'utf8'));
  const byId = new Map(prof.nodes.map((n) => [n.id, n]));
  // Time of each sample: the gap to the next one (timeDeltas[i] belongs to samples[i]).
  for (let i = 0; i < prof.samples.length; i++) {
    const n = byId.get(prof.samples[i]);
    const dt = prof.timeDeltas[i + 1] ?? 0;
    const f = n.callFrame;
    const where = f.url ? `${f.url.replace(/^.*node_modules\//, '').replace(/^file:\/\/.*\/dist\//, 'dist/')}:${f.lineNumber + 1}` : '';
    const key = `${f.functionName || '(anonymous)'} ${where}`.trim();
    self.set(key, (self.get(key) ?? 0) + dt);
    total += dt;
  }
}
const rows = [...self].sort((a, b) => b[1] - a[1]).slice(0, Number(values.top));
process.stdout.write(`${(total / 1e6).toFixed(2)} s sampled in ${files.length} profile(s)\n`);
for (const [k, us] of rows) process.stdout.write(`${((100 * us) / total).toFixed(1).padStart(5)} %  ${(us / 1e3).toFixed(0).padStart(7)} ms  ${k}\n`);
