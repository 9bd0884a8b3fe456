// Every input the fuzz campaign (npm run fuzz, docs/reliability.md) ever failed on is kept in
// tests/fixtures/fuzz/ and replayed here through the same oracle (tests/fuzz/harness.ts).
import { readdirSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { judge } from '../fuzz/harness';

const DIR = fileURLToPath(new URL('../fixtures/fuzz/', import.meta.url));
const cases = readdirSync(DIR).filter((f) => f.endsWith('.fold.yaml')).sort();

describe('fuzz regressions', () => {
  it('keeps its cases', () => {
    expect(cases.length).toBeGreaterThan(0);
  });
  for (const f of cases) {
    it(f, () => {
      const v = judge(readFileSync(DIR + f, 'utf8'));
      expect(v.failure ?? null, readFileSync(DIR + f + '.why.txt', 'utf8')).toBeNull();
    });
  }
});
