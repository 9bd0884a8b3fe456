// `npm run fuzz`: the fuzz campaign of docs/reliability.md. In-process: generated and mutated
// design files through the loader, the analysis and the control tables; then files through the
// built CLI as processes. Every failing input is written to tests/fixtures/fuzz/ (a regression
// case that tests/engine/fuzz-regressions.test.ts replays). Options: --inputs N (100000),
// --cli N (2000), --seed S (1), --batch B (files per CLI process, 20).
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { fuzzInput, judge } from '../tests/fuzz/harness';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const KEEP = path.join(ROOT, 'tests/fixtures/fuzz');
const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
};
const INPUTS = arg('inputs', 100_000);
const CLI = arg('cli', 2_000);
const SEED = arg('seed', 1);
const BATCH = arg('batch', 20);
/** An input slower than this is kept as a hang candidate (a figure of the run, not a test). */
const SLOW_MS = 2_000;

function keep(text: string, why: string): string {
  mkdirSync(KEEP, { recursive: true });
  const name = `${createHash('sha256').update(text).digest('hex').slice(0, 16)}.fold.yaml`;
  writeFileSync(path.join(KEEP, name), text);
  writeFileSync(path.join(KEEP, `${name}.why.txt`), `${why}\n`);
  return name;
}

let failures = 0;
let accepted = 0;
let slowest = 0;
const t0 = performance.now();
for (let i = 0; i < INPUTS; i++) {
  const text = fuzzInput(SEED, i);
  const s = performance.now();
  const v = judge(text);
  const ms = performance.now() - s;
  slowest = Math.max(slowest, ms);
  if (v.accepted) accepted++;
  if (!v.ok || ms > SLOW_MS) {
    failures++;
    const why = v.ok ? `took ${Math.round(ms)} ms (hang candidate)` : v.failure!;
    console.log(`input ${i}: ${why} -> tests/fixtures/fuzz/${keep(text, why)}`);
  }
  if ((i + 1) % 10_000 === 0) console.log(`  ${i + 1} inputs, ${failures} failures, ${accepted} accepted, ${Math.round((performance.now() - t0) / 1000)} s`);
}
const inProcessS = (performance.now() - t0) / 1000;
console.log(`in-process: ${INPUTS} inputs (${accepted} accepted as valid), ${failures} failures, slowest ${Math.round(slowest)} ms, ${inProcessS.toFixed(1)} s`);

// Through the CLI: batches of files in one `pleat check` each; exit 0/1/2 with no stack trace.
const dir = mkdtempSync(path.join(tmpdir(), 'pleat-fuzz-'));
let cliFailures = 0;
let processes = 0;
const t1 = performance.now();
try {
  for (let start = 0; start < CLI; start += BATCH) {
    const batch = path.join(dir, String(start));
    mkdirSync(batch);
    const texts: string[] = [];
    for (let k = start; k < Math.min(CLI, start + BATCH); k++) {
      const text = fuzzInput(SEED + 1, k);
      texts.push(text);
      writeFileSync(path.join(batch, `f${k}.fold.yaml`), text);
    }
    const r = spawnSync(process.execPath, [path.join(ROOT, 'bin/pleat.js'), 'check', batch, '--format', 'json'], { encoding: 'utf8', timeout: 60_000, maxBuffer: 256 * 1024 * 1024 });
    processes++;
    const problem =
      r.error || r.status === null
        ? `the CLI did not finish (${r.error?.message ?? r.signal})`
        : ![0, 1, 2].includes(r.status)
          ? `exit ${r.status}`
          : /\n\s+at .*:\d+:\d+/.test(r.stderr) || /internal error/.test(r.stderr)
            ? `stack trace or internal error: ${r.stderr.split('\n')[0]}`
            : (() => {
                try {
                  JSON.parse(r.stdout);
                  return null;
                } catch {
                  return 'the JSON report does not parse';
                }
              })();
    if (problem) {
      cliFailures++;
      for (const text of texts) keep(text, `CLI batch: ${problem}`);
      console.log(`CLI batch ${start}: ${problem}`);
    }
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
const cliS = (performance.now() - t1) / 1000;
console.log(`CLI: ${CLI} files in ${processes} processes, ${cliFailures} failing batches, ${cliS.toFixed(1)} s`);
process.exitCode = failures || cliFailures ? 1 : 0;
