// `pleat baseline` and `pleat check --baseline`: a committed file of accepted broken rules;
// the check fails only on broken rules that are new or worse, matched by design, rule and unit
// or edge, not by line (docs/cli.md, "Baselines"). Expected utilizations are counted by hand
// from the fixtures: busy partitions / N per unit (common practice, no source).
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, failingDesign, invalidDesign, passingDesign, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt);
afterAll(cleanupTemps);

/** passingDesign at another folding factor: each unit busy 1 of N partitions. */
function atFactor(n: number): string {
  return passingDesign().replace('factor: 2', `factor: ${n}`);
}

function repo(): string {
  const d = tempDir();
  // Each unit of passingDesign is busy 1 of 2 partitions (50%): below 75%, one violation per unit.
  write(d, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nrules:\n  min_unit_utilization: 0.75\n');
  write(d, 'a.fold.yaml', passingDesign());
  return d;
}

describe('pleat baseline', () => {
  it('writes the broken rules as pleat-baseline/1, keyed by design, rule and unit', async () => {
    const d = repo();
    const r = await pleat(['baseline'], { cwd: d });
    expect(r.exitCode, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^baseline pleat-baseline\.json: 2 broken rules of 1 design \(of 1 checked\)/);
    const b = JSON.parse(readFileSync(path.join(d, 'pleat-baseline.json'), 'utf8'));
    expect(b.format).toBe('pleat-baseline/1');
    expect(b.findings.map((f: { design: string; rule: string; subject: string; actual: number }) => [f.design, f.rule, f.subject, f.actual])).toEqual([
      ['smoke-pass', 'min_unit_utilization', 'unit ADD1', 0.5],
      ['smoke-pass', 'min_unit_utilization', 'unit MUL1', 0.5],
    ]);
    // No line numbers in the file: they move with every edit.
    expect(JSON.stringify(b)).not.toMatch(/"line"/);
  });

  it('refuses to write a baseline over an invalid design (exit 2)', async () => {
    const d = repo();
    write(d, 'bad.fold.yaml', invalidDesign());
    const r = await pleat(['baseline'], { cwd: d });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat: no baseline written: bad\.fold\.yaml is invalid/);
  });
});

describe('pleat check --baseline', () => {
  it('passes when every broken rule is baselined, also after lines moved, and says how many', async () => {
    const d = repo();
    await pleat(['baseline'], { cwd: d });
    expect((await pleat(['check'], { cwd: d })).exitCode).toBe(1);
    write(d, 'a.fold.yaml', `# a comment on top moves every line\n\n${passingDesign()}`);
    const r = await pleat(['check', '--baseline', 'pleat-baseline.json'], { cwd: d });
    expect(r.exitCode, r.stdout).toBe(0);
    expect(r.stdout).toMatch(/^gate holds: 0 of 1 design folds; 2 broken rules baselined, 0 new, 0 worse \(pleat-baseline\.json\)$/m);
    expect(r.stdout).toMatch(/^ {2}baselined min_unit_utilization=0\.75 \(repository\) at a\.fold\.yaml:\d+:\d+: unit ADD1/m);
  });

  it('fails on a broken rule that is new: another design, or a renamed one', async () => {
    const d = repo();
    await pleat(['baseline'], { cwd: d });
    write(d, 'b.fold.yaml', failingDesign());
    const r = await pleat(['check', '--baseline', 'pleat-baseline.json'], { cwd: d });
    expect(r.exitCode).toBe(1);
    // SARIF says the same with its own baselineState (SARIF 2.1.0, result.baselineState).
    const sarif = JSON.parse((await pleat(['check', '--baseline', 'pleat-baseline.json', '--format', 'sarif'], { cwd: d })).stdout);
    const states = sarif.runs[0].results.filter((x: { ruleId: string }) => x.ruleId.startsWith('rule/')).map((x: { ruleId: string; message: { text: string }; baselineState: string }) => [x.message.text.split(':')[0], x.ruleId, x.baselineState]);
    expect(states).toEqual(expect.arrayContaining([['smoke-pass', 'rule/min_unit_utilization', 'unchanged'], ['smoke-fail', 'rule/negative_delays', 'new']]));
    expect(r.stdout).toMatch(/^gate broken: smoke-fail breaks negative_delays \(edge m -> a\)(, smoke-fail breaks min_unit_utilization \(unit \w+\))*; 0 of 2 designs fold; 2 broken rules baselined, \d+ new, 0 worse/m);
  });

  it('fails on a broken rule that got worse: a unit busier before than now', async () => {
    const d = repo();
    await pleat(['baseline'], { cwd: d });
    // N = 4: each unit busy 1 of 4 partitions, 25% < the baselined 50%.
    write(d, 'a.fold.yaml', atFactor(4));
    const r = await pleat(['check', '--baseline', 'pleat-baseline.json'], { cwd: d });
    expect(r.exitCode).toBe(1);
    expect(r.stdout).toMatch(/smoke-pass breaks min_unit_utilization worse than baselined \(0\.5 -> 0\.25\)/);
    expect(r.stdout).toMatch(/; 0 broken rules baselined, 0 new, 2 worse \(pleat-baseline\.json\)$/m);
  });

  it('an invalid design still exits 2; a file that is not a baseline is exit 2 with the reason', async () => {
    const d = repo();
    await pleat(['baseline'], { cwd: d });
    write(d, 'bad.fold.yaml', invalidDesign());
    expect((await pleat(['check', '--baseline', 'pleat-baseline.json'], { cwd: d })).exitCode).toBe(2);
    write(d, 'other.json', '{"format": "pleat-report/1"}');
    const r = await pleat(['check', 'a.fold.yaml', '--baseline', 'other.json'], { cwd: d });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toBe('pleat: the baseline other.json is not a pleat baseline: format must be "pleat-baseline/1" (got "pleat-report/1")\n');
    const missing = await pleat(['check', 'a.fold.yaml', '--baseline', 'nope.json'], { cwd: d });
    expect(missing.exitCode).toBe(2);
    expect(missing.stderr).toMatch(/^pleat: cannot read the baseline nope\.json: no such file/);
  });
});
