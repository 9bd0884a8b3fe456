// The write-back of `pleat plan --write`: the new plan must read back exactly (checked with
// js-yaml, a YAML parser independent of the `yaml` package the splice uses), and every line
// outside the edited ranges must be byte for byte the original.
import { describe, expect, it } from 'vitest';
import { load as yamlLoad } from 'js-yaml';
import { topLevelWindow, writeBack, WriteBackError, yamlId, type WriteBackResult } from './writeBack';

/** Lines of the original that the result must still hold unchanged, in order (outside the replaced ranges). */
function keptLines(original: string, result: WriteBackResult): { before: string[]; after: string[] } {
  const o = original.split('\n');
  const n = result.text.split('\n');
  const inReplaced = (i: number) => result.replaced.some((r) => i + 1 >= r.from && i + 1 <= r.to);
  const inEdited = (i: number) => result.edited.some((r) => i + 1 >= r.from && i + 1 <= r.to);
  return { before: o.filter((_, i) => !inReplaced(i)), after: n.filter((_, i) => !inEdited(i)) };
}

const DESIGN = `# Pressure-sensor decimator, hand-planned at first.
format: pleat/1
name: baro-decimator   # a comment that must survive
units:
  - { id: ADD1, kind: add, stages: 0 }   # small adder
  - { id: MUL1, kind: mul, stages: 1 }
nodes:
  - { id: x, kind: input }
  - { id: m, kind: mul, coefficient: 0.5 }
  - { id: a, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: m }
  - { from: m, to: a }
  - { from: a, to: m, delays: 1, port: 1 }
  - { from: a, to: y }
folding:
  factor: 2      # two cycles per sample
  latency: free
  sets:
    # only the multiplier is placed so far
    MUL1: [m]
# trailing comment after the plan
`;

describe('writeBack', () => {
  it('replaces only the lines of folding.sets and keeps every other byte', () => {
    const sets = { MUL1: ['m', null], ADD1: [null, 'a'] };
    const r = writeBack(DESIGN, { sets });
    // Independent parser: the file now says exactly the planned sets.
    const back = yamlLoad(r.text) as { folding: { sets: unknown; factor: number } };
    expect(back.folding.sets).toEqual(sets);
    expect(back.folding.factor).toBe(2);
    const { before, after } = keptLines(DESIGN, r);
    expect(after).toEqual(before);
    expect(r.text).toContain('factor: 2      # two cycles per sample');
    expect(r.text).toContain('# trailing comment after the plan');
    expect(r.text).toContain('    MUL1: [m, ~]\n    ADD1: [~, a]\n');
    // The edited range is the sets lines only (lines 20..22 of the result).
    expect(r.edited).toEqual([{ from: 20, to: 22, what: 'sets' }]);
  });

  it('rewrites the factor scalar in place, keeping the comment after it', () => {
    const r = writeBack(DESIGN, { sets: { MUL1: ['m', null, null], ADD1: [null, 'a', null] }, factor: 3 });
    expect(r.text).toContain('  factor: 3      # two cycles per sample\n');
    const back = yamlLoad(r.text) as { folding: { factor: number } };
    expect(back.folding.factor).toBe(3);
    const { before, after } = keptLines(DESIGN, r);
    expect(after).toEqual(before);
  });

  it('rewrites units when they changed and leaves them byte-identical when not', () => {
    const same = writeBack(DESIGN, { sets: { MUL1: ['m'], ADD1: [null, 'a'] }, units: [{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 1 }] });
    expect(same.text).toContain('  - { id: ADD1, kind: add, stages: 0 }   # small adder\n');
    const units = [{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'ADD2', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 1 }];
    const r = writeBack(DESIGN, { sets: { MUL1: ['m'], ADD1: ['a'], ADD2: [] }, units });
    const back = yamlLoad(r.text) as { units: unknown };
    expect(back.units).toEqual(units);
    const { before, after } = keptLines(DESIGN, r);
    expect(after).toEqual(before);
    // The kept units keep their lines (and comments); the new one comes after its kind.
    expect(r.text).toContain('units:\n  - { id: ADD1, kind: add, stages: 0 }   # small adder\n  - { id: ADD2, kind: add, stages: 0 }\n  - { id: MUL1, kind: mul, stages: 1 }\n');
    expect(r.edited).toContainEqual({ from: 6, to: 6, what: 'units' });
  });

  it('drops only the lines of dropped units, and rewrites the list when a kept unit changes', () => {
    const two = DESIGN.replace('  - { id: MUL1, kind: mul, stages: 1 }\n', '  - { id: MUL1, kind: mul, stages: 1 }\n  - { id: MUL2, kind: mul, stages: 1 }  # spare\n');
    const units = [{ id: 'ADD1', kind: 'add', stages: 0 }, { id: 'MUL1', kind: 'mul', stages: 1 }];
    const r = writeBack(two, { sets: { MUL1: ['m'], ADD1: [null, 'a'] }, units });
    expect((yamlLoad(r.text) as { units: unknown }).units).toEqual(units);
    expect(r.text).not.toContain('spare');
    expect(r.replaced).toContainEqual({ from: 7, to: 7 });
    const { before, after } = keptLines(two, r);
    expect(after).toEqual(before);
    // Stages of a kept unit changed: the list is written anew.
    const changed = [{ id: 'ADD1', kind: 'add', stages: 1 }, { id: 'MUL1', kind: 'mul', stages: 1 }];
    const r2 = writeBack(DESIGN, { sets: { MUL1: ['m'], ADD1: [null, 'a'] }, units: changed });
    expect((yamlLoad(r2.text) as { units: unknown }).units).toEqual(changed);
    const k2 = keptLines(DESIGN, r2);
    expect(k2.after).toEqual(k2.before);
  });

  it('adds sets to a folding block that has none', () => {
    const text = DESIGN.replace(/ {2}sets:\n {4}# only the multiplier is placed so far\n {4}MUL1: \[m\]\n/, '');
    expect(text).not.toContain('sets');
    const sets = { MUL1: ['m'], ADD1: [null, 'a'] };
    const r = writeBack(text, { sets });
    expect((yamlLoad(r.text) as { folding: { sets: unknown } }).folding.sets).toEqual(sets);
    expect(r.replaced).toEqual([]);
    const { before, after } = keptLines(text, r);
    expect(after).toEqual(before);
    expect(r.text).toContain('  latency: free\n  sets:\n    MUL1: [m]\n    ADD1: [~, a]\n# trailing');
  });

  it('adds a folding block at the end when the design has none', () => {
    const text = DESIGN.slice(0, DESIGN.indexOf('folding:'));
    const r = writeBack(text, { sets: { MUL1: ['m'], ADD1: [null, 'a'] }, factor: 2 });
    const back = yamlLoad(r.text) as { folding: { factor: number; sets: unknown } };
    expect(back.folding).toEqual({ factor: 2, sets: { MUL1: ['m'], ADD1: [null, 'a'] } });
    expect(r.text.startsWith(text)).toBe(true);
    expect(() => writeBack(text, { sets: {} })).toThrow(WriteBackError);
  });

  it('handles a flow-style folding mapping and sets given as an empty flow map', () => {
    const flow = DESIGN.replace(/folding:[\s\S]*?(?=# trailing)/, 'folding: { factor: 2, sets: {} }  # flow\n');
    const sets = { MUL1: ['m'], ADD1: [null, 'a'] };
    const r = writeBack(flow, { sets });
    expect((yamlLoad(r.text) as { folding: { sets: unknown } }).folding.sets).toEqual(sets);
    expect(r.text).toContain('folding: { factor: 2, sets: { MUL1: [m], ADD1: [~, a] } }  # flow\n');
    const empty = DESIGN.replace(/ {2}sets:\n {4}# only[^\n]*\n {4}MUL1: \[m\]\n/, '  sets: {}   # to be planned\n');
    const r2 = writeBack(empty, { sets });
    expect((yamlLoad(r2.text) as { folding: { sets: unknown } }).folding.sets).toEqual(sets);
    const { before, after } = keptLines(empty, r2);
    expect(after).toEqual(before);
  });

  it('keeps CRLF line endings', () => {
    const crlf = DESIGN.replace(/\n/g, '\r\n');
    const r = writeBack(crlf, { sets: { MUL1: ['m'], ADD1: [null, 'a'] } });
    expect(r.text.replace(/\r\n/g, '')).not.toContain('\n');
    expect((yamlLoad(r.text) as { folding: { sets: unknown } }).folding.sets).toEqual({ MUL1: ['m'], ADD1: [null, 'a'] });
  });

  it('quotes ids that YAML would read as something else', () => {
    // YAML 1.2 core schema (open standard): these plain scalars are a number, a boolean, null.
    for (const id of ['12', '1.5', 'true', 'null', 'No', 'a b']) expect(yamlLoad(`[${yamlId(id)}]`)).toEqual([id]);
    expect(yamlId('acc_1')).toBe('acc_1');
  });
});

describe('writeBack of large files: only the entries it edits are parsed', () => {
  const sets = { MUL1: ['m', null], ADD1: [null, 'a'] };
  const units = [
    { id: 'ADD1', kind: 'add', stages: 0 },
    { id: 'MUL1', kind: 'mul', stages: 1 },
    { id: 'MUL2', kind: 'mul', stages: 1 },
  ];
  it('gives byte for byte the result of parsing the whole file', () => {
    const variants = [
      DESIGN,
      DESIGN.replace(/\n/g, '\r\n'),
      DESIGN.replace('# trailing comment after the plan\n', ''),
      DESIGN.replace('# trailing comment after the plan\n', 'description: >\n  folded last\n  folding: not a key\n'),
      DESIGN.replace(/folding:[\s\S]*?(?=# trailing)/, 'folding: { factor: 2, sets: {} }  # flow\n'),
    ];
    for (const text of variants) {
      for (const edit of [{ sets }, { sets, factor: 3 }, { sets, units }]) {
        const whole = writeBack(text, edit, { window: false });
        const cut = writeBack(text, edit);
        expect(cut).toEqual(whole);
        // js-yaml, independent of the yaml package: the whole result reads back as planned
        expect((yamlLoad(cut.text) as { folding: { sets: unknown } }).folding.sets).toEqual(sets);
      }
    }
  });

  it('cuts at column-0 keys only, and gives up where the top level is not plain', () => {
    const w = topLevelWindow(DESIGN, ['units', 'folding']);
    expect(w?.text.startsWith('units:\n')).toBe(true);
    expect(w?.text).toContain('\nfolding:\n');
    expect(w?.text).not.toContain('nodes:');
    // YAML 1.2 (open standard): these top levels are not cut by lines safely
    expect(topLevelWindow(`%YAML 1.2\n---\n${DESIGN}`, ['folding'])).toBeNull();
    expect(topLevelWindow(DESIGN.replace('folding:', 'folding: &f'), ['folding'])).toBeNull();
    expect(topLevelWindow(`${DESIGN}folding:\n  factor: 3\n`, ['folding'])).toBeNull();
    expect(topLevelWindow(DESIGN.replace('nodes:', '"nodes":'), ['folding'])).toBeNull();
    expect(topLevelWindow(DESIGN.slice(0, DESIGN.indexOf('folding:')), ['folding'])).toBeNull();
    // and the write-back still works there, through the whole file
    const anchored = DESIGN.replace('  latency: free', '  latency: &lat free');
    expect((yamlLoad(writeBack(anchored, { sets }).text) as { folding: { sets: unknown } }).folding.sets).toEqual(sets);
  });
});
