// Writing a plan back into a design file (shared/plannedDesign.ts): the document a second,
// independent YAML parser (js-yaml) reads from the output is the input's with only the planned
// parts replaced, and every line outside them is kept byte for byte, comments included.
import { readFileSync } from 'node:fs';
import { load } from 'js-yaml';
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/load';
import { withPlan } from '../../shared/plannedDesign';

const example = readFileSync(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url), 'utf8');
type Doc = { folding: { factor: number; sets?: Record<string, (string | null)[]> }; units: unknown[] } & Record<string, unknown>;

/** Lines of `before` that are missing from `after`, matching in order (a line diff's deletions). */
function lost(before: string, after: string): string[] {
  const out: string[] = [];
  const rest = after.split('\n');
  let at = 0;
  for (const line of before.split('\n')) {
    const i = rest.indexOf(line, at);
    if (i < 0) out.push(line);
    else at = i + 1;
  }
  return out;
}

describe('withPlan', () => {
  const design = loadDesign(example).design!;
  const cur = { factor: design.folding.factor, units: design.units };
  const sets = { ADD1: ['diff', null, 'acc', 'comp'], MUL1: ['pole', 'kcj', null, 'gain'] };

  it('replaces only the lines of folding.sets', () => {
    const out = withPlan(example, { factor: 4, units: design.units, sets }, cur)!;
    const before = load(example) as Doc;
    const after = load(out) as Doc;
    expect(after.folding.sets).toEqual(sets);
    expect({ ...after, folding: { ...after.folding, sets: null } }).toEqual({ ...before, folding: { ...before.folding, sets: null } });
    // Only the one set line that changed is gone; comments and alignment elsewhere stay.
    expect(lost(example, out)).toEqual(['    ADD1: [~, diff, acc, comp]']);
    expect(loadDesign(out).design?.folding.sets).toEqual(sets);
  });

  it('writes a new factor and new units in place', () => {
    const units = [...design.units, { id: 'MUL2', kind: 'mul', stages: 2 }];
    const wide = { ADD1: ['diff', null, 'acc', 'comp', null], MUL1: ['pole', 'kcj', null, null, null], MUL2: ['gain', null, null, null, null] };
    const out = withPlan(example, { factor: 5, units, sets: wide }, cur)!;
    const after = load(out) as Doc;
    expect(after.folding.factor).toBe(5);
    expect(after.units).toEqual(units);
    expect(after.folding.sets).toEqual(wide);
    const d = loadDesign(out);
    expect(d.diagnostics.filter((x) => x.severity === 'error')).toEqual([]);
    // Node and edge lines, with their comments, are untouched.
    for (const line of example.split('\n').filter((l) => /^ {2}- \{ (id|from):/.test(l) && !/kind: (add|mul), stages/.test(l))) {
      expect(out.split('\n')).toContain(line);
    }
  });

  it('adds sets to a design that has none, keeping what follows folding:', () => {
    const bare = example.replace(/\n {2}sets:\n( {4}.*\n?)+/, '\n');
    const out = withPlan(bare, { factor: 4, units: design.units, sets }, cur)!;
    expect((load(out) as Doc).folding.sets).toEqual(sets);
    expect(lost(bare, out)).toEqual([]);
    const empty = bare.replace('  factor: 4\n', '  factor: 4\n  sets: {}   # to be planned\n');
    const out2 = withPlan(empty, { factor: 4, units: design.units, sets }, cur)!;
    expect((load(out2) as Doc).folding.sets).toEqual(sets);
  });
});
