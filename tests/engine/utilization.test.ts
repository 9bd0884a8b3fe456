// Hardware utilization efficiency: the share of a unit's operation slots that do useful work.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { makeDesign } from '../support/designs';

/** y = a + b + c on one two-input adder: s1 = a + b, s2 = s1 + c. */
function threeOperandSum(factor: number, set: (string | null)[]) {
  return makeDesign({
    factor,
    units: [['ADD', 'add', 0]],
    nodes: [
      { id: 'a', kind: 'input' },
      { id: 'b', kind: 'input' },
      { id: 'c', kind: 'input' },
      ['s1', 'add'],
      ['s2', 'add'],
      { id: 'y', kind: 'output' },
    ],
    edges: [
      ['a', 's1'],
      ['b', 's1'],
      ['s1', 's2'],
      ['c', 's2'],
      ['s2', 'y'],
    ],
    sets: { ADD: set },
  });
}

describe('hardware utilization efficiency', () => {
  it('an adder doing both additions of a three-operand sum at N = 2 is fully used', () => {
    const a = analyze(threeOperandSum(2, ['s1', 's2']));
    // Common practice, no source: 2 useful operations in 2 slots = 100 %.
    expect(a.utilization.units.ADD).toBe(1);
    expect(a.utilization.overall).toBe(1);
  });

  it('with one wait state (N = 3) it is used two thirds of the time', () => {
    const a = analyze(threeOperandSum(3, ['s1', null, 's2']));
    // Common practice, no source: 2 useful operations in 3 slots = 66.7 %.
    expect(a.utilization.units.ADD).toBeCloseTo(0.667, 3);
    expect(a.utilization.overall).toBeCloseTo(2 / 3, 12);
  });

  it('a unit that does 160 operations in a 500-cycle window is 32 % used', () => {
    const ids = Array.from({ length: 160 }, (_, i) => `m${i}`);
    const set: (string | null)[] = new Array(500).fill(null);
    ids.forEach((id, i) => (set[i * 3] = id)); // spread over the window; positions do not matter
    const design = makeDesign({
      factor: 500,
      units: [['MUL', 'mul', 2]],
      nodes: [{ id: 'x', kind: 'input' }, ...ids.map((id) => [id, 'mul'] as [string, string])],
      edges: ids.map((id) => ['x', id] as [string, string]),
      sets: { MUL: set },
    });
    const a = analyze(design);
    // Common practice, no source: 160 / 500 = 32 %.
    expect(a.utilization.units.MUL).toBeCloseTo(0.32, 12);
  });

  it('the design figure counts every slot of every unit', () => {
    const design = makeDesign({
      factor: 4,
      units: [
        ['ADD', 'add', 1],
        ['MUL', 'mul', 2],
      ],
      nodes: [['s1', 'add'], ['s2', 'add'], ['s3', 'add'], ['s4', 'add'], ['g1', 'mul'], ['g2', 'mul']],
      edges: [['s1', 'g1'], ['g1', 's2'], ['s2', 's3'], ['s3', 'g2'], ['g2', 's4'], ['s4', 's1', 1]],
      sets: { ADD: ['s1', 's2', 's3', 's4'], MUL: [null, 'g1', null, 'g2'] },
    });
    const a = analyze(design);
    // Common practice, no source: 6 operations in 2 units x 4 slots = 75 %; per unit 100 % and 50 %.
    expect(a.utilization).toEqual({ overall: 0.75, units: { ADD: 1, MUL: 0.5 } });
  });
});
