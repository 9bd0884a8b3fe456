// The unit budget of `pleat plan --units` against the rules written in docs/cli.md ("Units made
// and dropped"), and the option parsers against hand-written expectations.
import { InvalidArgumentError } from 'commander';
import { describe, expect, it } from 'vitest';
import type { Design } from '../../shared/types';
import { CliError } from '../context';
import { budgetUnits, factorList, kindCounts } from './units';

function design(units: Design['units'], sets: Design['folding']['sets'] = {}, extraNodes: string[] = []): Design {
  return {
    format: 'pleat/1',
    name: 'wind-vane',
    kinds: { add: { time: 1 }, mul: { time: 1 } },
    units,
    nodes: [
      { id: 'x', kind: 'input' },
      { id: 'a', kind: 'add' },
      { id: 'b', kind: 'add' },
      { id: 'm', kind: 'mul' },
      ...extraNodes.map((id) => ({ id, kind: 'add' })),
      { id: 'y', kind: 'output' },
    ],
    edges: [],
    folding: { factor: 2, sets, latency: 'free' },
  };
}

describe('budgetUnits', () => {
  it('numbers new units after the design\'s own prefix and skips ids in use', () => {
    const d = design([{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'ADD2', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 2 }], {}, ['ADD4']);
    const r = budgetUnits(d, { add: 4, mul: 2 }, null);
    // The highest number in use with the prefix is ADD4 (a node id): new adders are ADD5, ADD6,
    // so no new id sits between old ones. MUL2 takes MUL1's stages.
    expect(r.units.map((u) => `${u.id}/${u.stages}`)).toEqual(['ADD1/0', 'ADD2/0', 'ADD5/0', 'ADD6/0', 'MUL1/2', 'MUL2/2']);
    expect(r.made).toEqual(['ADD5', 'ADD6', 'MUL2']);
    expect(r.dropped).toEqual([]);
  });

  it('uses the kind in capitals when the ids share no prefix, and --stages for new units', () => {
    const d = design([{ id: 'alu', kind: 'add', stages: 1 }, { id: 'MUL1', kind: 'mul', stages: 1 }]);
    const r = budgetUnits(d, { add: 2 }, { add: 3 });
    expect(r.units).toEqual([{ id: 'alu', kind: 'add', stages: 1 }, { id: 'ADD1', kind: 'add', stages: 3 }, { id: 'MUL1', kind: 'mul', stages: 1 }]);
  });

  it('drops surplus units from the end, but never one that holds pins', () => {
    const d = design([{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'ADD2', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 0 }]);
    expect(budgetUnits(d, { add: 1 }, null)).toMatchObject({ dropped: ['ADD2'], made: [] });
    const pinned = design(d.units, { ADD2: [null, 'b'] });
    expect(() => budgetUnits(pinned, { add: 1 }, null)).toThrow(CliError);
    expect(() => budgetUnits(pinned, { add: 1 }, null)).toThrow(/ADD2.*pinned operations \(b\)/);
  });

  it('refuses kinds the design does not use', () => {
    const d = design([{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 0 }]);
    expect(() => budgetUnits(d, { fft: 1 }, null)).toThrow(/kind `fft`.*its kinds: add, mul/);
  });
});

describe('option parsers', () => {
  it('reads KIND=COUNT lists and factor ranges', () => {
    expect(kindCounts('COUNT', 0)('add=2, mul=1')).toEqual({ add: 2, mul: 1 });
    expect(() => kindCounts('COUNT', 0)('add')).toThrow(InvalidArgumentError);
    expect(() => kindCounts('COUNT', 0)('add=1,add=2')).toThrow(/twice/);
    expect(factorList(64)('2..5,8,4')).toEqual([2, 3, 4, 5, 8]);
    expect(() => factorList(64)('5..2')).toThrow(InvalidArgumentError);
    expect(() => factorList(64)('0')).toThrow(InvalidArgumentError);
    expect(() => factorList(64)('2..100')).toThrow(InvalidArgumentError);
  });
});
