// Register allocation: both the forward-backward table and the ranked fallback must hold every
// live instance during its whole lifetime in exactly the lifetime minimum of registers.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { analyze } from '../../shared/analysis/analyze';
import { allocateRegisters, METHOD_FORWARD_BACKWARD, rankedAllocation } from '../../shared/analysis/allocation';
import { liveCounts } from '../../shared/analysis/registers';
import type { Lifetime } from '../../shared/types';
import { randomDesign } from '../support/randomDesign';
import { allocationProblems, expectedRows } from '../oracles/lifetimes';

const charts = fc
  .record({
    N: fc.integer({ min: 1, max: 8 }),
    raw: fc.array(fc.record({ slot: fc.integer({ min: 0, max: 7 }), stages: fc.integer({ min: 0, max: 3 }), length: fc.integer({ min: 1, max: 20 }) }), {
      minLength: 1,
      maxLength: 10,
    }),
  })
  .map(({ N, raw }) => {
    const variables: Lifetime[] = raw.map((v, i) => {
      const tIn = (v.slot % N) + v.stages;
      return { variable: `v${i}`, node: `v${i}`, tIn, tOut: tIn + v.length };
    });
    return { N, variables };
  });

describe('register allocation', () => {
  it('forward-backward (or its fallback) is consistent on random lifetime charts', () => {
    let forwardBackward = 0;
    fc.assert(
      fc.property(charts, ({ N, variables }) => {
        const K = Math.max(...expectedRows(variables, N).map((r) => r.length));
        const alloc = allocateRegisters({ factor: N, variables, live: liveCounts(N, variables) }, K);
        expect(alloc.registers).toBe(K);
        expect(allocationProblems(alloc, variables)).toEqual([]);
        if (alloc.method === METHOD_FORWARD_BACKWARD) forwardBackward++;
      }),
      { numRuns: 200 },
    );
    expect(forwardBackward).toBeGreaterThan(100);
  });

  it('the ranked fallback is consistent on its own', () => {
    fc.assert(
      fc.property(charts, ({ N, variables }) => {
        const K = Math.max(...expectedRows(variables, N).map((r) => r.length));
        const alloc = { registers: K, factor: N, ...rankedAllocation(variables, N, K) };
        expect(allocationProblems(alloc, variables)).toEqual([]);
      }),
      { numRuns: 300 },
    );
  });

  it('random designs use forward-backward mostly and the fallback sometimes, both consistent', () => {
    const methods = new Set<string>();
    for (let seed = 1; seed <= 150; seed++) {
      const a = analyze(randomDesign(seed, { maxOps: 12, maxSlack: 3 }));
      if (!a.allocation) continue;
      methods.add(a.allocation.method === METHOD_FORWARD_BACKWARD ? 'fb' : 'fallback');
      expect(allocationProblems(a.allocation, a.lifetimes!.variables), `seed ${seed}`).toEqual([]);
    }
    expect([...methods].sort()).toEqual(['fallback', 'fb']);
  });

  it('omits the table beyond the cell limit and says why', () => {
    const design = randomDesign(3, { maxOps: 10 });
    const full = analyze(design);
    expect(full.allocation).not.toBeNull();
    const cells = full.factor * full.registers!.minimum;
    const a = analyze(design, { maxAllocationCells: cells - 1 });
    expect(a.allocation).toBeNull();
    expect(a.allocationOmitted).toMatch(new RegExp(`= ${cells} cells, more than the limit of ${cells - 1}`));
    expect(a.registers).toEqual(full.registers);
  });

  it('no live value, no register', () => {
    const alloc = allocateRegisters({ factor: 3, variables: [], live: [0, 0, 0] }, 0);
    expect(alloc).toEqual({ registers: 0, factor: 3, method: METHOD_FORWARD_BACKWARD, cells: [[], [], []], moves: [] });
  });
});
