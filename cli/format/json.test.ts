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

  it('writes large maps and lists near the top in runs, with the text of JSON.stringify', () => {
    // A map of 3,000 members one level below the walked levels (as a retiming's values), with
    // keys JSON.stringify orders first (integers) or treats specially elsewhere (__proto__,
    // toJSON), members it leaves out, a member long enough to be walked itself; and a list of
    // edges one level higher, with holes and a few members long enough to be walked.
    const map: Record<string, unknown> = {};
    for (let i = 0; i < 3000; i++) map[`v${i}`] = i % 5 === 0 ? undefined : i % 7 === 0 ? () => i : i;
    Object.defineProperty(map, '__proto__', { value: 1, enumerable: true, configurable: true, writable: true });
    map['toJSON'] = 2;
    map['17'] = 'seventeen';
    map['3'] = null;
    map.long = Array.from({ length: 600 }, (_, i) => ({ i, at: new Date(i) }));
    map.inner = { a: undefined, b: [undefined, () => 1, 'c\u007f'] };
    const report = {
      designs: [{ retiming: { values: map }, edges: Array.from({ length: 40_000 }, (_, i) => (i % 1000 === 0 ? undefined : i % 999 === 0 ? Array(300).fill(i) : { from: `n${i}`, to: `n${i + 1}`, gone: undefined })) }],
    } as unknown as Report;
    const expected = `${JSON.stringify(report).replace(/\u007f/g, '\\u007f')}\n`;
    const chunks: string[] = [];
    writeJson(report, (c) => chunks.push(c));
    expect(chunks.length).toBeGreaterThan(1);
    expect(chunks.join('')).toBe(expected);
  });

  it('escapes DEL and C1 controls in an ASCII report and a Latin-1 one alike', () => {
    for (const name of ['a\u007fb', 'a\u0085b', 'plain']) {
      const report = { designs: [{ name }] } as unknown as Report;
      expect(formatJson(report)).toBe(`${JSON.stringify(report, null, 2).replace(/[\u007f\u0085]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`)}\n`);
    }
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
