// Register counts and lifetime analysis: the live counts against a direct count over
// iterations by the definition in docs/analysis.md, and the held-input convention worked by hand.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { analyze } from '../../shared/analysis/analyze';
import { liveCounts, registerCounts, registerFigures } from '../../shared/analysis/registers';
import { buildGraph } from '../../shared/analysis/graph';
import { foldedDelays } from '../../shared/analysis/foldedDelay';
import { retimedDelays } from '../../shared/analysis/retiming';
import { randomDesign } from '../support/randomDesign';
import { makeDesign } from '../support/designs';
import { liveByDefinition } from '../oracles/lifetimes';

describe('lifetime analysis', () => {
  it('the difference-array live counts equal a direct count over iterations', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 9 }),
        fc.array(fc.record({ tIn: fc.integer({ min: 0, max: 20 }), length: fc.integer({ min: 0, max: 40 }) }), { maxLength: 12 }),
        (N, raw) => {
          const vars = raw.map((v, i) => ({ variable: `v${i}`, node: `v${i}`, tIn: v.tIn, tOut: v.tIn + v.length }));
          // Source: the definition of live(t) in docs/analysis.md, counted term by term.
          expect(liveCounts(N, vars)).toEqual(liveByDefinition(N, vars));
        },
      ),
      { numRuns: 300 },
    );
  });

  it('a held input is one variable per edge with delays, from the consumer slot', () => {
    // x is held; x -> a carries 2 delays at N = 3: D_F = 3*2 = 6, so variable x->a lives from
    // slot(a) = 1 to 7. a (1 stage, slot 1) feeds b (slot 2) directly: D_F = 0-1+2-1 = 0.
    const design = makeDesign({
      factor: 3,
      units: [['ADD', 'add', 1]],
      nodes: [{ id: 'x', kind: 'input' }, ['a', 'add'], ['b', 'add'], { id: 'y', kind: 'output' }],
      edges: [['x', 'a', 2], ['a', 'b', 0], ['b', 'y', 0], ['x', 'b', 0]],
      sets: { ADD: [null, 'a', 'b'] },
    });
    const a = analyze(design);
    expect(a.lifetimes!.variables).toEqual([{ variable: 'x->a', node: 'x', tIn: 1, tOut: 7 }]);
    // Worked by hand: 6 cycles of life over N = 3 partitions = 2 registers at every partition.
    expect(a.lifetimes!.live).toEqual([2, 2, 2]);
    expect(a.registers).toEqual({ perEdge: 6, delayLines: 6, minimum: 2 });
  });

  it('delay lines share one chain per unit, per-edge chains do not', () => {
    // One unit runs a and b; a -> c carries D_F 4, b -> c carries D_F 3 (worked below).
    const design = makeDesign({
      factor: 4,
      units: [['ADD', 'add', 0], ['MUL', 'mul', 0]],
      nodes: [['a', 'add'], ['b', 'add'], ['c', 'mul']],
      edges: [['a', 'c', 1], ['b', 'c', 1], ['c', 'a', 1]],
      sets: { ADD: ['a', 'b'], MUL: ['c'] },
    });
    const a = analyze(design);
    // D_F: a->c = 4+0-0 = 4, b->c = 4+0-1 = 3, c->a = 4+0-0 = 4 (by hand).
    expect(a.edges.map((e) => e.foldedDelay)).toEqual([4, 3, 4]);
    // perEdge 4+3+4; delay lines: ADD max(4,3) + MUL 4.
    expect(a.registers!.perEdge).toBe(11);
    expect(a.registers!.delayLines).toBe(8);
  });

  it('the figures the fewest-register search scores with are the counts of the chart', () => {
    // Common practice, no source: the short count (no chart) must equal the full one, on random
    // designs retimed by random nonnegative values so that held inputs and long lifetimes occur.
    for (let seed = 1; seed <= 200; seed++) {
      const g = buildGraph(randomDesign(seed));
      const r = new Float64Array(g.nodeCount);
      for (let i = 0; i < g.nodeCount; i++) r[i] = (seed * 7 + i * 13) % 4;
      for (const delays of [g.edgeDelays, retimedDelays(g, r)]) {
        const folded = foldedDelays(g, delays);
        const full = registerCounts(g, folded, delays).registers;
        expect(registerFigures(g, folded, delays)).toEqual({ perEdge: full.perEdge, minimum: full.minimum });
      }
    }
  });
});
