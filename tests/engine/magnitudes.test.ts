// Large counts in a design: the schema refuses what no hardware has, and below those bounds the
// analysis does not step through every cycle or every delay (docs/diagnostics.md: bounds).
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { allocateRegisters } from '../../shared/analysis/allocation';
import { liveCounts } from '../../shared/analysis/registers';
import { controlTables, MAX_HARDWARE_CELLS } from '../../shared/hardware/control';
import { loadDesign } from '../../shared/design/load';
import { MAX_DELAYS, MAX_STAGES } from '../../shared/design/schema';
import type { Lifetime } from '../../shared/types';
import { makeDesign } from '../support/designs';
import { allocationProblems, expectedRows } from '../oracles/lifetimes';

function plan(stages: number, delays: number): string {
  return `format: pleat/1
name: deep
units: [{ id: MUL, kind: mul, stages: ${stages} }, { id: ADD, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: g, kind: mul, coefficient: 0.5 }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: g }
  - { from: g, to: s, delays: ${delays} }
  - { from: x, to: s }
  - { from: s, to: y }
folding: { factor: 2, sets: { MUL: [g], ADD: [~, s] } }
`;
}

describe('bounds of the schema', () => {
  it('refuses stages past MAX_STAGES (2147483647 used to hang check) and delays past MAX_DELAYS, at their line', () => {
    for (const [text, line, what] of [
      [plan(2147483647, 0), 3, `2147483647 is above the maximum ${MAX_STAGES}`],
      [plan(MAX_STAGES + 1, 0), 3, `${MAX_STAGES + 1} is above the maximum ${MAX_STAGES}`],
      [plan(1, MAX_DELAYS + 1), 11, `${MAX_DELAYS + 1} is above the maximum ${MAX_DELAYS}`],
    ] as const) {
      const r = loadDesign(text);
      expect(r.design).toBeNull();
      expect(r.diagnostics).toHaveLength(1);
      expect(r.diagnostics[0]).toMatchObject({ code: 'schema-value', line });
      expect(r.diagnostics[0].message).toContain(what);
    }
    expect(loadDesign(plan(MAX_STAGES, MAX_DELAYS)).design).not.toBeNull();
  });
});

describe('time does not grow with stage counts', () => {
  it('a unit of 2^31 - 1 stages (a design built without the loader) is analysed and allocated', () => {
    // g is produced 2^31 - 1 cycles after its slot; x->s (one delay) right away. The allocation
    // used to simulate every empty cycle before g's first result.
    const P = 2147483647;
    const design = makeDesign({
      factor: 2,
      units: [
        ['MUL', 'mul', P],
        ['ADD', 'add', 0],
      ],
      nodes: [{ id: 'x', kind: 'input' }, ['g', 'mul'], ['s', 'add'], { id: 'y', kind: 'output' }],
      // N*w - P + (slot difference) = 2*1073741824 - P + 1 = 2: g lives 2 cycles.
      edges: [
        ['x', 'g'],
        ['g', 's', 1073741824],
        ['x', 's', 1],
        ['s', 'y'],
      ],
      sets: { MUL: ['g'], ADD: [null, 's'] },
    });
    const a = analyze(design);
    expect(a.retiming.needed).toBe(false);
    expect(a.lifetimes!.variables.map((v) => [v.variable, v.tIn, v.tOut - v.tIn])).toEqual([
      ['x->s', 1, 2],
      ['g', P, 2],
    ]);
    expect(a.allocation).not.toBeNull();
    // Independent check (tests/oracles/lifetimes.ts): every live instance sits in a register
    // during its whole lifetime, and no register holds two.
    expect(allocationProblems(a.allocation!, a.lifetimes!.variables)).toEqual([]);
  });

  it('lifetime charts with production times 10^9 apart allocate in the lifetime minimum', () => {
    const N = 3;
    const variables: Lifetime[] = [
      { variable: 'a', node: 'a', tIn: 0, tOut: 4 },
      { variable: 'b', node: 'b', tIn: 1_000_000_001, tOut: 1_000_000_006 },
      { variable: 'c', node: 'c', tIn: 2_000_000_000, tOut: 2_000_000_002 },
    ];
    const K = Math.max(...expectedRows(variables, N).map((r) => r.length));
    const alloc = allocateRegisters({ factor: N, variables, live: liveCounts(N, variables) }, K);
    expect(alloc.registers).toBe(K);
    expect(allocationProblems(alloc, variables)).toEqual([]);
  });
});

describe('time does not grow with delay counts', () => {
  it('an edge of MAX_DELAYS delays: check counts its registers; the hardware tables are refused with the figures', () => {
    const design = loadDesign(plan(1, MAX_DELAYS)).design!;
    const a = analyze(design);
    // g -> s: N*w - stages + slot(s) - slot(g) = 2*10^6 - 1 + 1 = 2*10^6 cycles: 10^6 registers (common practice, no source: a line of w samples needs w registers).
    expect(a.registers!.minimum).toBe(MAX_DELAYS);
    expect(a.allocation).toBeNull(); // 2 x 10^6 cells: over the allocation table's limit
    const built = controlTables(design, a);
    expect(built.control).toBeNull();
    expect(built.tooLarge).toBe(true);
    expect(built.reason).toContain(`2,000,000 register cells`);
    expect(2 * MAX_DELAYS).toBeGreaterThan(MAX_HARDWARE_CELLS);
  });
});
