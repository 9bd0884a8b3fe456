// Numbers no design has, byte counts and text encodings (docs/diagnostics.md). Outside
// references: IEEE 754 extremes (1e308 near the largest double, 5e-324 the smallest subnormal,
// common practice, no source); the byte-order marks and UTF-8 rules of Unicode / RFC 3629;
// Node's own TextEncoder for the UTF-8 of the valid cases.
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { checkRules } from '../../shared/report/rules';
import { decodeDesignBytes, formatBytes } from '../../shared/design/encoding';

function design(extra: { clock?: string; time?: string } = {}): string {
  return `format: pleat/1
name: extremes
${extra.clock !== undefined ? `clock_ns: ${extra.clock}\n` : ''}kinds: { add: { time: ${extra.time ?? '1'} } }
units: [{ id: A, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: s }
  - { from: s, to: s, delays: 1 }
  - { from: s, to: y }
folding: { factor: 1, sets: { A: [s] } }
`;
}

describe('numbers no design has are refused; the rest print as finite numbers', () => {
  it('times of 1e308 and 5e-324 and clock periods of 1e308 and 5e-324 are schema-value errors at their line', () => {
    for (const [text, line] of [
      [design({ time: '1e308' }), 3],
      [design({ time: '5e-324' }), 3],
      [design({ clock: '1e308' }), 3],
      [design({ clock: '5e-324' }), 3],
    ] as const) {
      const r = loadDesign(text);
      expect(r.design, text).toBeNull();
      expect(r.diagnostics.map((d) => `${d.code}@${d.line}`)).toEqual([`schema-value@${line}`]);
    }
  });

  it('at the bounds every figure of the analysis is finite', () => {
    for (const [clock, time] of [
      ['1e-6', '1e-6'],
      ['1e9', '1e6'],
    ]) {
      const d = loadDesign(design({ clock, time })).design!;
      const a = analyze(d);
      const json = JSON.stringify(a);
      expect(json).not.toMatch(/null,"sampleRateMHz"|Infinity|NaN/);
      for (const v of [a.samplePeriodNs, a.sampleRateMHz, a.iterationBound!.value]) {
        expect(Number.isFinite(v), String(v)).toBe(true);
        expect(v).toBeGreaterThan(0);
      }
    }
  });

  it('max_registers: 1e308 is not taken as an integer', () => {
    const r = checkRules({ max_registers: 1e308 });
    expect(r.rules.max_registers).toBeUndefined();
    expect(r.problems[0].message).toMatch(/max_registers must be a whole number from 0 to 2,147,483,647 \(got 1e\+308\)/);
    expect(checkRules({ max_registers: 64 }).rules.max_registers).toBe(64);
  });
});

describe('byte counts are exact', () => {
  it('one byte over the limit says both counts in bytes', () => {
    expect(formatBytes(16 * 1024 * 1024 + 1)).toBe('16,777,217 bytes (16.0 MiB)');
    const r = loadDesign('#'.repeat(65), { limits: { maxBytes: 64 } });
    expect(r.diagnostics[0].message).toMatch(/larger than 64 bytes, the limit/);
  });
});

describe('text encodings', () => {
  const text = design();
  const utf8 = new TextEncoder().encode(text);

  it('valid UTF-8, with or without the UTF-8 byte-order mark, decodes to the text', () => {
    expect(decodeDesignBytes(utf8).text).toBe(text);
    expect(decodeDesignBytes(new Uint8Array([0xef, 0xbb, 0xbf, ...utf8])).text).toBe(text);
  });

  it('invalid UTF-8 is refused at the first bad byte with its line and column, not replaced', () => {
    // "name: ext\xFFremes": 0xFF never occurs in UTF-8 (RFC 3629).
    const at = text.indexOf('extremes') + 3;
    const bad = new Uint8Array([...utf8.subarray(0, at), 0xff, ...utf8.subarray(at)]);
    const d = decodeDesignBytes(bad);
    expect(d.text).toBeNull();
    expect(d.diagnostic).toMatchObject({ code: 'file-encoding', line: 2, column: 10 });
    expect(d.diagnostic!.message).toMatch(new RegExp(`not valid UTF-8: byte ${at} \\(FF`));
    // Overlong form of '/' and a UTF-16 surrogate written as UTF-8: both invalid (RFC 3629).
    for (const seq of [[0xc0, 0xaf], [0xed, 0xa0, 0x80]]) {
      expect(decodeDesignBytes(new Uint8Array([0x61, ...seq])).diagnostic).toMatchObject({ code: 'file-encoding', line: 1, column: 2 });
    }
  });

  it('UTF-16 and UTF-32, with or without a byte-order mark, are named as such', () => {
    const le16 = new Uint8Array(utf8.length * 2);
    utf8.forEach((b, i) => (le16[2 * i] = b));
    const be16 = new Uint8Array(utf8.length * 2);
    utf8.forEach((b, i) => (be16[2 * i + 1] = b));
    expect(decodeDesignBytes(new Uint8Array([0xff, 0xfe, ...le16])).diagnostic!.message).toMatch(/^the file is UTF-16 \(little-endian; it starts with the byte-order mark FF FE\)/);
    expect(decodeDesignBytes(new Uint8Array([0xfe, 0xff, ...be16])).diagnostic!.message).toMatch(/^the file is UTF-16 \(big-endian/);
    expect(decodeDesignBytes(le16).diagnostic!.message).toMatch(/looks like UTF-16 \(little-endian, no byte-order mark/);
    expect(decodeDesignBytes(new Uint8Array([0xff, 0xfe, 0, 0, 0x66, 0, 0, 0])).diagnostic!.message).toMatch(/UTF-32 \(little-endian/);
    expect(decodeDesignBytes(new Uint8Array([0xff, 0xfe, ...le16])).diagnostic!.message).not.toMatch(/null byte/);
  });
});
