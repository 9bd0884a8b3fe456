// `pleat diff BASE.json NEW.json`: the comparison in folding terms. The expected changes are
// counted by hand from the fixtures (tests/cli/helpers.ts): passingDesign at N=2 keeps each of
// its two units busy 1 of 2 partitions (utilization 2/4 = 50%), at N=4 1 of 4 (25%)
// (hardware utilization efficiency, busy over available slots; common practice, no source).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { diffReports } from '../../shared/report/diff';
import { cleanupTemps, ensureBuilt, failingDesign, passingDesign, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt);
afterAll(cleanupTemps);

async function reportOf(dir: string, designs: Record<string, string>, out: string): Promise<void> {
  for (const [f, text] of Object.entries(designs)) write(dir, `${out}.d/${f}`, text);
  await pleat(['check', `${out}.d`, '--format', 'json', '--output', out], { cwd: dir });
}

describe('pleat diff', () => {
  it('names what moved per design, and the designs that came and went', async () => {
    const d = tempDir();
    await reportOf(d, { 'a.fold.yaml': passingDesign('smoother'), 'b.fold.yaml': passingDesign('steady'), 'c.fold.yaml': passingDesign('retired') }, 'base.json');
    await reportOf(
      d,
      {
        'a.fold.yaml': passingDesign('smoother').replace('factor: 2', 'factor: 4'),
        'b.fold.yaml': passingDesign('steady'),
        'd.fold.yaml': failingDesign('newcomer'),
      },
      'now.json',
    );
    const r = await pleat(['diff', 'base.json', 'now.json'], { cwd: d });
    expect(r.exitCode, r.stderr).toBe(0);
    const out = r.stdout;
    expect(out.split('\n')[0]).toBe('comparing base.json -> now.json');
    const block = out.split('\n\n').find((b) => b.startsWith('design smoother'))!;
    expect(block).toMatch(/^design smoother {2}folds$/m);
    expect(block).toMatch(/^ {2}factor {4}N 2 -> 4$/m);
    expect(block).toMatch(/^ {2}util {6}50% -> 25%$/m);
    // steady did not move: it has no block.
    expect(out).not.toMatch(/^design steady/m);
    expect(out).toMatch(/^design newcomer {2}breaks rules {2}new at N=2\n {2}file {6}now\.json\.d\/d\.fold\.yaml$/m);
    expect(out).toMatch(/^design retired {2}gone \(was folds at N=2\)$/m);
    expect(out).toMatch(/^moved: 1 design, 1 as before, 1 new, 1 gone; gate holds -> broken$/m);
  });

  it('the engine comparison: registers, negative edges, loops and rules between a plan that folds and one that does not', () => {
    // The same names on both sides: the passing smoothing loop and the loop with 3 stages in 2 cycles.
    const design = (status: 'pass' | 'fail', o: Record<string, unknown>) => ({ file: 'x.fold.yaml', name: 'loop', status, diagnostics: [], violations: [], ...o });
    const before = design('pass', { factor: 2, registers: { minimum: 2 }, edges: [{ foldedDelay: 1 }], retiming: { feasible: true, latencyAdded: 0 }, schedule: [{ kind: 'add' }, { kind: 'mul' }] });
    const after = design('fail', { factor: 2, registers: null, edges: [{ foldedDelay: -3 }], retiming: { feasible: false, latencyAdded: 0 }, schedule: [{ kind: 'add' }, { kind: 'mul' }, { kind: 'mul' }], violations: [{ rule: 'negative_delays' }] });
    const diff = diffReports({ verdict: 'pass', designs: [before as never] }, { verdict: 'fail', designs: [after as never] });
    const d = diff.designs[0];
    expect(d.moved).toBe(true);
    expect(d.registers).toEqual({ before: 2, now: null });
    expect(d.negativeEdges).toEqual({ before: 0, now: 1 });
    expect(d.retimable).toEqual({ before: true, now: false });
    expect(d.units).toEqual({ before: { add: 1, mul: 1 }, now: { add: 1, mul: 2 } });
    expect(d.rulesBroken).toEqual({ added: ['negative_delays'], cleared: [], still: [] });
  });

  it('bad input is exit 2 with a one-line message', async () => {
    const d = tempDir();
    write(d, 'x.json', '{"format": "pleat-plan/1"}');
    const one = await pleat(['diff', 'x.json'], { cwd: d });
    expect(one.exitCode).toBe(2);
    expect(one.stderr).toMatch(/^pleat: pleat diff needs two reports/);
    const wrong = await pleat(['diff', 'x.json', 'x.json'], { cwd: d });
    expect(wrong.exitCode).toBe(2);
    expect(wrong.stderr).toBe('pleat: x.json is not a pleat report (format pleat-report/1); `pleat check --format json --output FILE` writes one\n');
  });
});
