// The one "did you mean" of design files and rules, against an edit distance written here from
// its definition (Levenshtein: fewest insertions, deletions and substitutions; common practice, no source).
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { closest } from '../../shared/didYouMean';

/** Levenshtein distance by the recursive definition, memoised. */
function distance(a: string, b: string): number {
  const memo = new Map<string, number>();
  const d = (i: number, j: number): number => {
    if (i === 0) return j;
    if (j === 0) return i;
    const k = `${i},${j}`;
    let v = memo.get(k);
    if (v === undefined) {
      v = Math.min(d(i - 1, j) + 1, d(i, j - 1) + 1, d(i - 1, j - 1) + (a[i - 1] === b[j - 1] ? 0 : 1));
      memo.set(k, v);
    }
    return v;
  };
  return d(a.length, b.length);
}

describe('closest', () => {
  it('suggests the first nearest name within one edit for short words and two for longer ones', () => {
    const word = fc.stringMatching(/^[a-cA-C_]{0,7}$/);
    fc.assert(
      fc.property(word, fc.array(word, { maxLength: 6 }), (w, names) => {
        const limit = w.length <= 4 ? 1 : 2;
        const ds = names.map((n) => distance(w.toLowerCase(), n.toLowerCase()));
        const best = Math.min(...ds);
        const want = best <= limit ? names[ds.indexOf(best)] : null;
        expect(closest(w, names)).toBe(want);
      }),
      { numRuns: 2000 },
    );
  });

  it('gives no suggestion for a name longer than 64 characters', () => {
    const long = 'x'.repeat(65);
    expect(closest(long, [long])).toBeNull();
  });
});
