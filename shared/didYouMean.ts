// The one "did you mean" of the engine: design files (shared/design/validate.ts) and rules
// (shared/report/rules.ts) suggest a known name for a mistyped one with the same limit.
// Method: Levenshtein edit distance, compared case-insensitively.

/** Words longer than this get no suggestion: long names are not typos, and the distance would cost their product. */
const LONGEST_WORD = 64;

/** Edit distance of a and b, or 3 when their lengths already differ by more than 2 (beyond any limit used here). */
function editDistance(a: string, b: string): number {
  if (Math.abs(a.length - b.length) > 2) return 3;
  const prev = new Array<number>(b.length + 1);
  for (let j = 0; j <= b.length; j++) prev[j] = j;
  for (let i = 1; i <= a.length; i++) {
    let diagPrev = prev[0];
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = prev[j];
      prev[j] = Math.min(prev[j] + 1, prev[j - 1] + 1, diagPrev + (a[i - 1] === b[j - 1] ? 0 : 1));
      diagPrev = tmp;
    }
  }
  return prev[b.length];
}

/**
 * The candidate nearest to `word`, if it is at most one edit away for a word of up to 4
 * characters and at most two edits for a longer one (a wider limit suggests unrelated names
 * among short ones); the first such candidate wins a tie.
 */
export function closest(word: string, candidates: readonly string[]): string | null {
  if (word.length > LONGEST_WORD) return null;
  let best: string | null = null;
  let bestD = word.length <= 4 ? 2 : 3;
  const lw = word.toLowerCase();
  for (const c of candidates) {
    const d = editDistance(lw, c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return best;
}
