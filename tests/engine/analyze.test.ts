// The assembled analysis: schedule rows, sample period and rate, edge order, and the exact
// decimal reading of times behind the iteration bound.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { decimalToRational } from '../../shared/fraction';
import { makeDesign } from '../support/designs';

describe('analyze', () => {
  const design = makeDesign({
    factor: 4,
    clockNs: 2.5,
    kinds: { add: { time: 1 }, mul: { time: 2.5 } },
    units: [['ADD', 'add', 1], ['MUL', 'mul', 2], ['IDLE', 'mul', 1]],
    nodes: [{ id: 'x', kind: 'input' }, ['s1', 'add'], ['g1', 'mul'], ['s2', 'add'], { id: 'y', kind: 'output' }],
    edges: [['x', 's1'], ['s1', 'g1'], ['g1', 's2'], ['s2', 's1', 2], ['s2', 'y']],
    sets: { ADD: ['s1', null, 's2'], MUL: [null, 'g1'], IDLE: [] },
  });
  const a = analyze(design);

  it('pads every unit to N partitions, in file order', () => {
    expect(a.schedule).toEqual([
      { unit: 'ADD', kind: 'add', stages: 1, slots: ['s1', null, 's2', null] },
      { unit: 'MUL', kind: 'mul', stages: 2, slots: [null, 'g1', null, null] },
      { unit: 'IDLE', kind: 'mul', stages: 1, slots: [null, null, null, null] },
    ]);
  });

  it('gives the sample period N * clock and its rate', () => {
    // Common practice, no source: one sample every N clock cycles; 4 x 2.5 ns = 10 ns = 100 MHz.
    expect(a.samplePeriodNs).toBe(10);
    expect(a.sampleRateMHz).toBe(100);
    const noClock = analyze({ ...design, clockNs: undefined });
    expect([noClock.samplePeriodNs, noClock.sampleRateMHz]).toEqual([null, null]);
  });

  it('keeps the edges in file order', () => {
    expect(a.edges.map((e) => `${e.from}->${e.to}`)).toEqual(design.edges.map((e) => `${e.from}->${e.to}`));
  });

  it('reads decimal times exactly: the loop s1 g1 s2 takes (1 + 2.5 + 1) / 2 = 9/4', () => {
    expect(a.iterationBound).toEqual({ value: 2.25, numerator: 9, denominator: 4, loop: ['s1', 'g1', 's2'] });
    // Stages on the loop: 1 + 2 + 1 = 4 over 2 delays.
    expect(a.factorLowerBound).toBe(2);
  });

  it('has no iteration bound without loops', () => {
    const b = analyze(makeDesign({ factor: 1, units: [['A', 'add', 3]], nodes: [['p', 'add']], edges: [], sets: { A: ['p'] } }));
    expect(b.iterationBound).toBeNull();
    expect(b.factorLowerBound).toBe(1);
  });
});

describe('decimal times as exact fractions', () => {
  it.each([
    // Common practice, no source: the decimal a person writes, as an exact fraction.
    [2.5, 5n, 2n],
    [0.1, 1n, 10n],
    [1e-7, 1n, 10_000_000n],
    [1.5e21, 1_500_000_000_000_000_000_000n, 1n],
    [0.3, 3n, 10n],
    [3, 3n, 1n],
  ])('%s', (x, num, den) => {
    expect(decimalToRational(x)).toEqual({ num, den });
  });
});

describe('register tables of a report', () => {
  // Project convention, no outside source (docs/analysis.md, "Register allocation"): a report
  // carries the allocation table and the control tables up to the same 20,000 register cells;
  // simulate (no control tables in its run) keeps the analysis' limit of 200,000.
  it('leaves both tables out of a report past 20,000 cells, and simulate still gets the allocation', async () => {
    const { runDesignText, runDesignModel } = await import('../../shared/pipeline');
    const { loadDesign } = await import('../../shared/design/load');
    const { generateDesign } = await import('../../scripts/gen-design.mjs');
    const { text } = generateDesign({ edges: 5000, seed: 11 });
    const run = runDesignText(text, 'bank.fold.yaml');
    const a = run.analysis!;
    const cells = a.factor * a.registers!.minimum;
    expect(cells).toBeGreaterThan(20_000);
    expect(cells).toBeLessThanOrEqual(200_000);
    expect(run.report.allocation).toBeNull();
    expect(run.report.allocationOmitted).toContain(`= ${cells} cells, more than the limit of 20000 for a report`);
    expect(run.report.control).toBeUndefined();
    expect(run.report.controlOmitted).toContain('more than the limit of 20000');
    const sim = runDesignModel(loadDesign(text).design!, 'bank.fold.yaml', { withControl: false });
    expect(sim.analysis!.allocation!.registers).toBe(a.registers!.minimum);
    expect(sim.analysis!.allocationOmitted).toBeUndefined();
  });

  it('keeps both tables in a report within 20,000 cells', async () => {
    const { runDesignText } = await import('../../shared/pipeline');
    const { generateDesign } = await import('../../scripts/gen-design.mjs');
    const run = runDesignText(generateDesign({ edges: 600, seed: 11 }).text, 'bank.fold.yaml');
    const a = run.analysis!;
    expect(a.factor * a.registers!.minimum).toBeLessThanOrEqual(20_000);
    expect(run.report.allocation!.registers).toBe(a.registers!.minimum);
    expect(run.report.control).not.toBeNull();
    expect(run.report.control).toBeDefined();
  });
});
