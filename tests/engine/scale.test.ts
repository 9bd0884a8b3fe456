// Large designs: every method is iterative and near-linear, so loops of hundreds of thousands
// of nodes neither overflow the stack nor stall. No timing is asserted here (see the report).
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import type { DfgNode } from '../../shared/types';
import { cascadeDesign, makeDesign } from '../support/designs';

/** One loop through `n` adders with a single delay, N = 4, positions in loop order. */
function ring(n: number) {
  const nodes: DfgNode[] = [];
  const edges: [string, string, number][] = [];
  const units: [string, string, number][] = [];
  const sets: Record<string, string[]> = {};
  for (let i = 0; i < n; i++) {
    nodes.push({ id: `r${i}`, kind: 'add' });
    edges.push([`r${i}`, `r${(i + 1) % n}`, i === n - 1 ? 1 : 0]);
    if (i % 4 === 0) {
      units.push([`U${i / 4}`, 'add', 1]);
      sets[`U${i / 4}`] = [];
    }
    sets[`U${Math.floor(i / 4)}`].push(`r${i}`);
  }
  return makeDesign({ factor: 4, units, nodes, edges, sets });
}

describe('large designs', () => {
  it('a 100,000-node loop: bound, lower bound and the conflict loop come out whole', () => {
    const n = 100_000;
    const a = analyze(ring(n));
    // n nodes of 1 stage (time = stages) over 1 delay.
    expect(a.iterationBound).toMatchObject({ numerator: n, denominator: 1 });
    expect(a.iterationBound!.loop).toHaveLength(n);
    expect(a.factorLowerBound).toBe(n);
    expect(a.retiming.feasible).toBe(false);
    const c = a.retiming.conflict!;
    expect(c.edges).toHaveLength(n);
    expect([c.loopDelays, c.loopStages, c.minFactor]).toEqual([1, n, n]);
    expect(c.suggestions[0].length).toBeLessThan(400); // long loops are abbreviated
  });

  it('a 100,000-edge cascade that needs retiming is retimed with every folded delay nonnegative', () => {
    const design = cascadeDesign(8_334, 2);
    expect(design.edges.length).toBeGreaterThan(100_000);
    const a = analyze(design);
    expect(a.retiming).toMatchObject({ needed: true, feasible: true });
    expect(a.edges.every((e) => e.retimedDelays >= 0 && (e.retimedFoldedDelay ?? 0) >= 0)).toBe(true);
    expect(a.registers!.minimum).toBeGreaterThan(0);
    expect(a.allocation).toBeNull(); // far beyond the default cell limit
    expect(a.allocationOmitted).toMatch(/more than the limit of 200000/);
  });
});
