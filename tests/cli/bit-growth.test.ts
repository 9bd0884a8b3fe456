// `pleat check` and bit growth (docs/analysis.md, "Bit growth"): a design that declares number
// formats gets a `format-too-narrow` warning where a signal's worst-case range exceeds its format,
// at the format's line and column, in every report format.
import { XMLParser } from 'fast-xml-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, pleat, tempDir, write } from './helpers';

// A 4-tap direct-form FIR. Its worst-case output gain is the sum of the absolute coefficients
// (the l1 norm of the impulse response; common practice, any DSP textbook):
// |0.5| + |0.75| + |-0.75| + |0.5| = 2.5, so with a Q0.15 input the output reaches about
// +-2.5: Q1.15 (up to 2 - 2^-15) is one integer bit too narrow, Q2.15 (up to 4 - 2^-15) holds it.
function fir(lastSumFormat: string, name: string): string {
  return `format: pleat/1
name: ${name}
kinds:
  add: { time: 1 }
  mul: { time: 2 }
units:
  - { id: M, kind: mul, stages: 0 }
  - { id: A, kind: add, stages: 0 }
fixed_point: { format: Q3.15 }
nodes:
  - { id: x, kind: input, format: Q0.15 }
  - { id: g0, kind: mul, coefficient: 0.5 }
  - { id: g1, kind: mul, coefficient: 0.75 }
  - { id: g2, kind: mul, coefficient: -0.75 }
  - { id: g3, kind: mul, coefficient: 0.5 }
  - { id: s1, kind: add }
  - { id: s2, kind: add }
  - { id: s3, kind: add, format: ${lastSumFormat} }
  - { id: y, kind: output }
edges:
  - { from: x, to: g0 }
  - { from: x, to: g1, delays: 1 }
  - { from: x, to: g2, delays: 2 }
  - { from: x, to: g3, delays: 3 }
  - { from: g0, to: s1 }
  - { from: g1, to: s1 }
  - { from: s1, to: s2 }
  - { from: g2, to: s2 }
  - { from: s2, to: s3 }
  - { from: g3, to: s3 }
  - { from: s3, to: y }
folding:
  factor: 4
  sets:
    M: [g0, g1, g2, g3]
    A: [~, s1, s2, s3]
`;
}

// Line 18 is s3's node; column 34 is the first character of its format's value.
const LINE = 18;
const COLUMN = 34;

let dir: string;
beforeAll(async () => {
  await ensureBuilt();
  dir = tempDir();
  write(dir, 'narrow.fold.yaml', fir('Q1.15', 'fir-narrow'));
  write(dir, 'wide.fold.yaml', fir('Q2.15', 'fir-wide'));
});
afterAll(cleanupTemps);

describe('format-too-narrow in pleat check', () => {
  it('text: one bit too narrow is a warning at the format, one bit wider is not; the exit code stays 0', async () => {
    const narrow = await pleat(['check', 'narrow.fold.yaml', '--no-color'], { cwd: dir });
    expect(narrow.exitCode).toBe(0);
    expect(narrow.stdout).toContain(`narrow.fold.yaml:${LINE}:${COLUMN}: warning format-too-narrow: \`s3\``);
    expect(narrow.stdout).toContain('beyond Q1.15; Q2.15 holds it');
    // Only the sum that carries the whole gain is too narrow: the partial sums fit Q3.15.
    expect(narrow.stdout.match(/format-too-narrow/g)).toHaveLength(1);
    const wide = await pleat(['check', 'wide.fold.yaml', '--no-color'], { cwd: dir });
    expect(wide.exitCode).toBe(0);
    expect(wide.stdout).not.toContain('format-too-narrow');
  });

  it('json: the diagnostic with its place and the range about +-2.5 (sum of absolute coefficients)', async () => {
    const r = await pleat(['check', 'narrow.fold.yaml', 'wide.fold.yaml', '--format', 'json'], { cwd: dir });
    const report = JSON.parse(r.stdout);
    const [narrow, wide] = report.designs;
    expect(narrow.status).toBe('pass');
    expect(narrow.diagnostics).toEqual([
      expect.objectContaining({ severity: 'warning', code: 'format-too-narrow', line: LINE, column: COLUMN }),
    ]);
    const [lo, hi] = narrow.diagnostics[0].message.match(/\[(-?[\d.]+), (-?[\d.]+)\]/).slice(1).map(Number);
    // hi = 1.75 (1 - 2^-15) + 0.75, lo = -1.75 - 0.75 (1 - 2^-15): within 2^-14 of +-2.5.
    expect(hi).toBeCloseTo(2.5, 4);
    expect(lo).toBeCloseTo(-2.5, 4);
    expect(wide.diagnostics).toEqual([]);
  });

  it('github, markdown, junit, sarif and gitlab carry the finding with file, line and column', async () => {
    const github = await pleat(['check', 'narrow.fold.yaml', '--format', 'github'], { cwd: dir });
    expect(github.stdout).toContain(`::warning file=narrow.fold.yaml,line=${LINE},col=${COLUMN},title=pleat format-too-narrow::`);

    const markdown = await pleat(['check', 'narrow.fold.yaml', '--format', 'markdown'], { cwd: dir });
    expect(markdown.stdout).toContain('format-too-narrow');
    expect(markdown.stdout).toContain(`${LINE}`);

    const junit = await pleat(['check', 'narrow.fold.yaml', '--format', 'junit'], { cwd: dir });
    expect(junit.stdout).toContain('format-too-narrow');
    expect(junit.stdout).toContain(`narrow.fold.yaml:${LINE}:${COLUMN}`);
    expect(() => new XMLParser().parse(junit.stdout)).not.toThrow();

    const sarif = JSON.parse((await pleat(['check', 'narrow.fold.yaml', '--format', 'sarif'], { cwd: dir })).stdout);
    const results = sarif.runs[0].results.filter((x: { ruleId: string }) => x.ruleId === 'format-too-narrow');
    expect(results).toHaveLength(1);
    expect(results[0].level).toBe('warning');
    expect(results[0].locations[0].physicalLocation.artifactLocation.uri).toBe('narrow.fold.yaml');
    expect(results[0].locations[0].physicalLocation.region).toMatchObject({ startLine: LINE, startColumn: COLUMN });

    const gitlab = JSON.parse((await pleat(['check', 'narrow.fold.yaml', '--format', 'gitlab'], { cwd: dir })).stdout);
    const issues = gitlab.filter((x: { check_name: string }) => x.check_name === 'format-too-narrow');
    expect(issues).toHaveLength(1);
    expect(issues[0].location).toMatchObject({ path: 'narrow.fold.yaml' });
    expect(JSON.stringify(issues[0].location)).toContain(`${LINE}`);

    // SARIF's rule table lists every rule id; the wide design has no result.
    for (const format of ['github', 'markdown', 'junit', 'gitlab']) {
      const wide = await pleat(['check', 'wide.fold.yaml', '--format', format], { cwd: dir });
      expect(wide.stdout).not.toContain('format-too-narrow');
    }
    const wideSarif = JSON.parse((await pleat(['check', 'wide.fold.yaml', '--format', 'sarif'], { cwd: dir })).stdout);
    expect(wideSarif.runs[0].results).toEqual([]);
  });
});
