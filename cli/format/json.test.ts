// The streamed JSON report against the platform's JSON.stringify (ECMA-262's serialisation, the
// reference): the same text, in chunks, for a report far over the chunk size.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { writeJson, formatJson } from './json';
import type { Report } from '../../shared/types';

/** A report-shaped value: a few levels of objects, long lists and maps deep down, odd members. */
function bigReport(edges: number): Report {
  const values: Record<string, number> = {};
  for (let i = 0; i < edges; i++) values[`n${i}`] = i % 7;
  return {
    format: 'pleat-report/1',
    tool: { name: 'pleat', version: '0', skipped: undefined },
    designs: [
      {
        file: 'a.fold.yaml',
        name: 'a\u2028b',
        analysis: {
          edges: Array.from({ length: edges }, (_, i) => ({ from: `n${i}`, to: `n${i + 1}`, delays: i % 3, foldedDelay: i % 5 === 0 ? null : -1, gone: undefined })),
          retiming: { values, fn: () => 1 },
          list: [1, undefined, 'x', [2, [3]]],
          at: new Date(0),
        },
      },
    ],
  } as unknown as Report;
}

describe('writeJson', () => {
  it('writes a large report in chunks whose text is JSON.stringify of it, unsafe characters escaped', () => {
    const report = bigReport(60_000);
    const chunks: string[] = [];
    writeJson(report, (c) => chunks.push(c));
    expect(chunks.length).toBeGreaterThan(2);
    const expected = `${JSON.stringify(report).replace(/\u2028/g, '\\u2028')}\n`;
    expect(chunks.join('')).toBe(expected);
  });

  it('indents a small report in one piece, as before', () => {
    const report = bigReport(3);
    expect(formatJson(report)).toBe(`${JSON.stringify(report, null, 2).replace(/\u2028/g, '\\u2028')}\n`);
  });

  it('matches JSON.stringify on random JSON values (fast-check)', () => {
    fc.assert(
      fc.property(fc.array(fc.jsonValue(), { minLength: 300, maxLength: 600 }), (list) => {
        const report = { designs: [{ analysis: { deep: { deeper: list } } }], big: list } as unknown as Report;
        const chunks: string[] = [];
        writeJson(report, (c) => chunks.push(c));
        const text = chunks.join('');
        expect(JSON.parse(text)).toEqual(JSON.parse(JSON.stringify(report)));
      }),
      { numRuns: 30 },
    );
  });
});
