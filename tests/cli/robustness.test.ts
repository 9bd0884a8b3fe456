// The CLI as a process on mutated and random design files: it must never crash, hang or print a
// stack trace. A broken file gives exit 2 and a diagnostic with file:line:col; a mutation that
// happens to stay valid may pass or fail its rules (exit 0 or 1). Common practice, no source.
import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { execa } from 'execa';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BIN, EXAMPLES, cleanupTemps, ensureBuilt, tempDir, write } from './helpers';

const seeds = readdirSync(EXAMPLES)
  .filter((f) => f.endsWith('.fold.yaml') && !f.startsWith('generated'))
  .map((f) => readFileSync(path.join(EXAMPLES, f), 'utf8'));

// One edit of the kinds people make by accident: a deleted, duplicated or re-indented line, a
// character replaced, a YAML sigil dropped in.
const edit = fc.oneof(
  fc.record({ op: fc.constant('delete-line' as const), at: fc.nat() }),
  fc.record({ op: fc.constant('duplicate-line' as const), at: fc.nat() }),
  fc.record({ op: fc.constant('indent' as const), at: fc.nat(), by: fc.integer({ min: -4, max: 4 }) }),
  fc.record({ op: fc.constant('replace-char' as const), at: fc.nat(), ch: fc.constantFrom(':', '-', '{', '}', '[', ']', '&', '*', '!', '"', "'", '#', '|', '>', ' ', '\t', '0', 'x', '\u00e9') }),
  fc.record({ op: fc.constant('truncate' as const), at: fc.nat() }),
);

interface Edit { op: string; at: number; by?: number; ch?: string }

function mutate(text: string, edits: Edit[]): string {
  let lines = text.split('\n');
  for (const e of edits) {
    const i = e.at % Math.max(1, lines.length);
    if (e.op === 'delete-line') lines.splice(i, 1);
    else if (e.op === 'duplicate-line') lines.splice(i, 0, lines[i] ?? '');
    else if (e.op === 'indent') lines[i] = e.by! >= 0 ? ' '.repeat(e.by!) + (lines[i] ?? '') : (lines[i] ?? '').slice(-e.by!);
    else if (e.op === 'truncate') lines = lines.slice(0, i);
    else {
      const flat = lines.join('\n');
      const j = e.at % Math.max(1, flat.length);
      lines = (flat.slice(0, j) + e.ch + flat.slice(j + 1)).split('\n');
    }
  }
  return lines.join('\n');
}

const STACK = /^\s+at .+(\(|:\d+:\d+)/m;

beforeAll(ensureBuilt, 120_000);
afterAll(cleanupTemps);

describe('mutated and random design files', () => {
  it('never crash, hang or print a stack trace; broken files point at a line', async () => {
    const dir = tempDir('pleat-fuzz-');
    const samples = fc.sample(
      fc.tuple(fc.integer({ min: 0, max: seeds.length - 1 }), fc.array(edit, { minLength: 1, maxLength: 4 })),
      { numRuns: 60, seed: 20261201 },
    );
    samples.forEach(([s, edits], k) => write(dir, `m${String(k).padStart(3, '0')}.fold.yaml`, mutate(seeds[s], edits)));
    // Random text that is not a design at all.
    fc.sample(fc.string({ unit: 'binary', maxLength: 300 }), { numRuns: 20, seed: 7 }).forEach((t, k) => write(dir, `r${k}.fold.yaml`, t));

    // One process over all files, so a crash on any of them shows; a hang hits the timeout.
    const r = await execa(process.execPath, [BIN, 'check', dir, '--format', 'json', '--no-color'], { reject: false, timeout: 60_000 });
    expect(r.timedOut).toBe(false);
    expect([0, 1, 2]).toContain(r.exitCode);
    expect(String(r.stderr)).not.toMatch(STACK);
    const report = JSON.parse(String(r.stdout));
    expect(report.designs).toHaveLength(80);
    let broken = 0;
    for (const d of report.designs) {
      expect(['pass', 'fail', 'error']).toContain(d.status);
      if (d.status !== 'error') continue;
      broken++;
      const errors = d.diagnostics.filter((x: { severity: string }) => x.severity === 'error');
      expect(errors.length, d.file).toBeGreaterThan(0);
      for (const e of errors) {
        expect(e.code).not.toBe('internal-error');
        expect(typeof e.line, `${d.file} ${e.code}`).toBe('number');
        expect(typeof e.column, `${d.file} ${e.code}`).toBe('number');
      }
    }
    // Most mutations break something; the exit code then says so.
    expect(broken).toBeGreaterThan(20);
    expect(r.exitCode).toBe(2);
  });

  it('a single broken file: exit 2 and file:line:col on the terminal, no stack', async () => {
    const dir = tempDir('pleat-fuzz1-');
    const file = write(dir, 'broken.fold.yaml', mutate(seeds[0], [{ op: 'replace-char', at: seeds[0].indexOf('edges:') + 6, ch: '{' }]));
    const r = await execa(process.execPath, [BIN, 'check', file, '--no-color'], { reject: false, timeout: 30_000 });
    expect(r.exitCode).toBe(2);
    expect(String(r.stdout) + String(r.stderr)).toMatch(/broken\.fold\.yaml:\d+:\d+: error [a-z-]+:/);
    expect(String(r.stdout) + String(r.stderr)).not.toMatch(STACK);
  });
});

describe('encodings and sizes as the CLI reads files', () => {
  const valid = seeds[0];
  it('invalid UTF-8 and UTF-16 files are file-encoding errors with file:line:col, exit 2; sizes are exact bytes', async () => {
    const dir = tempDir();
    const bytes = Buffer.from(valid, 'utf8');
    const at = valid.indexOf('\n') + 3;
    writeFileSync(path.join(dir, 'bad.fold.yaml'), Buffer.concat([bytes.subarray(0, at), Buffer.from([0xc3, 0x28]), bytes.subarray(at)]));
    writeFileSync(path.join(dir, 'wide.fold.yaml'), Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(valid, 'utf16le')]));
    writeFileSync(path.join(dir, 'big.fold.yaml'), Buffer.alloc(128 * 1024 * 1024 + 1, 0x23)); // '#' x (128 MiB + 1)
    const r = await execa(process.execPath, [BIN, 'check', '.', '--no-color'], { cwd: dir, reject: false });
    expect(r.exitCode).toBe(2);
    expect(r.stdout).toMatch(/^ {2}bad\.fold\.yaml:2:3: error file-encoding: the file is not valid UTF-8: byte \d+ \(C3 28/m);
    expect(r.stdout).toMatch(/^ {2}wide\.fold\.yaml:1:1: error file-encoding: the file is UTF-16 \(little-endian/m);
    expect(r.stdout).not.toMatch(/null byte/);
    expect(r.stdout).toMatch(/big\.fold\.yaml:1:1: error file-too-large: the file is 134,217,729 bytes \(128\.0 MiB\); the limit is 134,217,728 bytes \(128\.0 MiB\)/);
  });
});
