// --hardware-summary: reading the summaries of pleat rtl --area and attaching them to the
// report's designs by name (docs/cli.md, "Hardware summaries"). Real files in a temporary folder.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { HardwareSummary } from '../../shared/report/hardwareSummary';
import type { Report } from '../../shared/types';
import { attachHardware, readHardwareSummaries } from './hardware';

const dir = mkdtempSync(path.join(tmpdir(), 'pleat-hw-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const summary: HardwareSummary = {
  format: 'pleat-hardware', version: 1, design: 'notch', file: 'hw/notch.fold.yaml', top: 'notch', tool: 'Yosys 0.23',
  compared: { stages: 'folded', multipliers: 'general', width: 16, coefFrac: 14 },
  folded: { cells: 10, flipFlops: 4, depth: 3, factor: 2 }, parallel: { cells: 20, flipFlops: 8, depth: 2, factor: 1 },
};
const report = (names: (string | null)[]): Report => ({
  format: 'pleat-report/1', tool: { name: 'pleat', version: '1' }, git: { branch: 'main', commit: 'abcdef1' }, verdict: 'pass', rules: {},
  designs: names.map((name, i) => ({ file: `hw/d${i}.fold.yaml`, name, status: 'pass', diagnostics: [], violations: [] })),
});

describe('--hardware-summary', () => {
  it('attaches a summary to the design of its name and leaves the others alone', () => {
    const f = path.join(dir, 'notch.hardware.json');
    writeFileSync(f, JSON.stringify(summary));
    const [s] = readHardwareSummaries([f], dir);
    const out = attachHardware(report(['other', 'notch']), [s!], [f]);
    expect(out.designs[1]!.hardware).toEqual(summary);
    expect(out.designs[0]).not.toHaveProperty('hardware');
  });

  it('refuses bad JSON with file:line:column, a non-summary, an unknown or shared design name', () => {
    const bad = path.join(dir, 'bad.json');
    writeFileSync(bad, '{\n  "format": "pleat-hardware",\n  oops\n}');
    expect(() => readHardwareSummaries(['bad.json'], dir)).toThrow(/^bad\.json:3:\d+: not JSON/);
    const wrong = path.join(dir, 'wrong.json');
    writeFileSync(wrong, JSON.stringify({ ...summary, version: 9 }));
    expect(() => readHardwareSummaries(['wrong.json'], dir)).toThrow(/wrong\.json:1:1: not a hardware summary.*\/version/);
    expect(() => attachHardware(report(['other']), [summary], ['s.json'])).toThrow(/design "notch", which this report does not have/);
    expect(() => attachHardware(report(['notch', 'notch']), [summary], ['s.json'])).toThrow(/2 designs of the report are named "notch"/);
    expect(() => attachHardware(report(['notch']), [summary, summary], ['a.json', 'b.json'])).toThrow(/^b\.json: a second hardware summary/);
  });
});
