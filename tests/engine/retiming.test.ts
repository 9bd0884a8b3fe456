// Retiming for folding on small DFGs worked by hand from the constraints of docs/analysis.md
// (r(U) - r(V) <= floor(D_F / N)), including the conflict report when no retiming exists.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { makeDesign } from '../support/designs';

describe('retiming for folding', () => {
  it('a loop with too few delays for its pipeline stages cannot be retimed and asks for N >= stages/delays', () => {
    // a -> b -> a with one delay on a 2-stage adder: loop stages 4, delays 1, so N >= 4
    // (the loop's total folded delay N*1 - 4 must be >= 0). At N = 2 it is -2.
    const design = makeDesign({
      factor: 2,
      units: [['ADD', 'add', 2]],
      nodes: [['a', 'add'], ['b', 'add']],
      edges: [['a', 'b', 0], ['b', 'a', 1]],
      sets: { ADD: ['a', 'b'] },
    });
    const a = analyze(design);
    expect(a.edges.map((e) => e.foldedDelay)).toEqual([-1, -1]); // 0-2+1-0 and 2-2+0-1, by hand
    expect(a.retiming).toMatchObject({ needed: true, feasible: false, values: {} });
    const c = a.retiming.conflict!;
    expect(c.edges.map((e) => `${e.from}->${e.to}`)).toEqual(['a->b', 'b->a']);
    expect(c).toMatchObject({ loopDelays: 1, loopStages: 4, minFactor: 4 });
    expect(c.conflictingEdges).toEqual([
      { from: 'a', to: 'b', foldedDelay: -1 },
      { from: 'b', to: 'a', foldedDelay: -1 },
    ]);
    expect(c.suggestions[0]).toMatch(/folding factor to 4/);
    expect(c.suggestions.some((s) => /fewer pipeline stages on ADD/.test(s))).toBe(true);
    expect(a.registers).toBeNull();
    expect(a.allocation).toBeNull();
    expect(a.factorLowerBound).toBe(4);
  });

  it('takes the floor of a negative folded delay, not its truncation', () => {
    // N = 4: D_F(a->b) = 0-1+0-0 = -1 -> r(a)-r(b) <= floor(-1/4) = -1, and
    // D_F(b->a) = 4-1+0-0 = 3 -> r(b)-r(a) <= 0: no solution, although N >= stages/delays = 2.
    const design = makeDesign({
      factor: 4,
      units: [['ADD0', 'add', 1], ['ADD1', 'add', 1]],
      nodes: [['a', 'add'], ['b', 'add']],
      edges: [['a', 'b', 0], ['b', 'a', 1]],
      sets: { ADD0: ['a'], ADD1: ['b'] },
    });
    const a = analyze(design);
    expect(a.retiming.feasible).toBe(false);
    const c = a.retiming.conflict!;
    expect(c.minFactor).toBe(2);
    // N is already large enough: the fix is another position.
    expect(c.suggestions[0]).toMatch(/^Give a, b other partitions/);
    // Moving b one partition later makes it feasible: D_F(a->b) = 0, D_F(b->a) = 2.
    const moved = analyze({ ...design, folding: { ...design.folding, sets: { ADD0: ['a'], ADD1: [null, 'b'] } } });
    expect(moved.retiming).toMatchObject({ needed: false, feasible: true });
  });

  it('adds latency between input and output when it is free, and names the boundary when it is fixed', () => {
    // x (slot 0) -> a (1 stage, slot 0) -> y (read at slot 0): D_F(a->y) = 0-1+0-0 = -1, so the
    // output must move one iteration later: r(y) - r(a) >= 1 with r(x) = r(a) = 0.
    const spec = {
      factor: 2,
      units: [['ADD', 'add', 1]] as [string, string, number][],
      nodes: [{ id: 'x', kind: 'input', slot: 0 }, ['a', 'add'] as [string, string], { id: 'y', kind: 'output', slot: 0 }],
      edges: [['x', 'a'], ['a', 'y']] as [string, string][],
      sets: { ADD: ['a'] },
    };
    const free = analyze(makeDesign(spec));
    expect(free.retiming).toMatchObject({ needed: true, feasible: true, values: { x: 0, a: 0, y: 1 }, latencyAdded: 1 });
    expect(free.edges[1]).toMatchObject({ retimedDelays: 1, retimedFoldedDelay: 1 }); // 2*1-1+0-0

    const fixed = analyze(makeDesign({ ...spec, latency: 'fixed' }));
    expect(fixed.retiming.feasible).toBe(false);
    const c = fixed.retiming.conflict!;
    expect(c.edges).toEqual([
      { from: 'x', to: 'a', delays: 0, foldedDelay: 0 },
      { from: 'a', to: 'y', delays: 0, foldedDelay: -1 },
      { from: 'y', to: 'x', delays: 0, foldedDelay: null, viaBoundary: true },
    ]);
    expect(c.minFactor).toBeNull();
    expect(c.suggestions.some((s) => /latency to free/.test(s))).toBe(true);
  });

  it('without inputs, shifts the values so that the smallest is 0', () => {
    // N = 2, sets [b, a], 1 stage: D_F(a->b) = 0-1+0-1 = -2 -> r(a) - r(b) <= -1;
    // D_F(b->a) = 4-1+1-0 = 4 -> r(b) - r(a) <= 2. Shortest paths: r(a) = -1, r(b) = 0.
    const design = makeDesign({
      factor: 2,
      units: [['ADD', 'add', 1]],
      nodes: [['a', 'add'], ['b', 'add']],
      edges: [['a', 'b', 0], ['b', 'a', 2]],
      sets: { ADD: ['b', 'a'] },
    });
    const a = analyze(design);
    expect(a.retiming.values).toEqual({ a: 0, b: 1 });
    expect(a.retiming.method).toMatch(/smallest is 0/);
    expect(a.edges.map((e) => [e.retimedDelays, e.retimedFoldedDelay])).toEqual([
      [1, 0],
      [1, 2],
    ]);
  });

  it('keeps a tap nonnegative: an output without slot only needs w_r >= 0', () => {
    const design = makeDesign({
      factor: 3,
      units: [['MUL', 'mul', 2]],
      nodes: [{ id: 'x', kind: 'input' }, ['g', 'mul'], { id: 'y', kind: 'output' }],
      edges: [['x', 'g'], ['g', 'y']],
      sets: { MUL: ['g'] },
    });
    const a = analyze(design);
    // Held input: D_F = N*w = 0; the tap has no folded delay.
    expect(a.edges.map((e) => e.foldedDelay)).toEqual([0, null]);
    expect(a.retiming.needed).toBe(false);
  });
});
