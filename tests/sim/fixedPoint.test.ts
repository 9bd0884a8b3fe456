// Number formats, rounding and overflow modes, bit growth and the fixed-point report of
// simulate, against worked examples and references computed independently in this file.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { parseNumberFormat } from '../../shared/design/numberFormat';
import { fitFormat, shiftRound } from '../../shared/hardware/quantize';
import { formatPlan } from '../../shared/hardware/formats';
import { formatArithmetic } from '../../shared/hardware/formatArithmetic';
import { fixedArithmetic, randomStreams } from '../../shared/hardware/arith';
import { evaluateReference, resolveArithmetic } from '../../shared/hardware/reference';
import { bitGrowth } from '../../shared/hardware/range';
import { simulateDesign } from '../../shared/hardware/foldedSim';
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';
import { randomDesignFile as randomDesign } from '../support/randomDesign';

const FIXTURES = path.join(__dirname, 'fixtures');

function load(text: string): Design {
  const { design, diagnostics } = loadDesign(text);
  if (!design) throw new Error(JSON.stringify(diagnostics));
  return design;
}

describe('Q notation', () => {
  it('counts the sign bit apart from the integer bits', () => {
    // The convention that does not count the sign in m (common practice, no source): Q3.12 and
    // UQ1.15 are both 16-bit words, Q0.15 is the usual 16-bit fraction.
    expect(parseNumberFormat('Q3.12')).toEqual({ signed: true, int: 3, frac: 12, bits: 16 });
    expect(parseNumberFormat('UQ1.15')).toEqual({ signed: false, int: 1, frac: 15, bits: 16 });
    expect(parseNumberFormat('Q0.15')).toEqual({ signed: true, int: 0, frac: 15, bits: 16 });
    expect(parseNumberFormat('Q40.40')).toMatch(/81 bits/);
    expect(parseNumberFormat('UQ0.0')).toMatch(/no bits/);
  });

  it('is validated with codes and positions', () => {
    const base = (extra: string, input = '{ id: x, kind: input }') =>
      `format: pleat/1\nname: t\n${extra}units:\n  - { id: A, kind: add, stages: 0 }\nnodes:\n  - ${input}\n  - { id: s, kind: add }\n  - { id: y, kind: output }\nedges:\n  - { from: x, to: s }\n  - { from: s, to: y }\nfolding:\n  factor: 1\n  sets: { A: [s] }\n`;
    const codes = (t: string) => loadDesign(t).diagnostics.map((d) => `${d.code}@${d.line}`);
    expect(codes(base('fixed_point: { format: Q3 }\n'))).toEqual(['schema-value@3']);
    expect(codes(base('fixed_point: { format: Q40.40 }\n'))).toEqual(['number-format@3']);
    expect(codes(base('', '{ id: x, kind: input, rounding: convergent }'))).toEqual(['rounding-on-input@6']);
    expect(loadDesign(base('fixed_point: { format: Q3.12, rounding: round-half-up, overflow: saturate }\n')).design?.fixedPoint).toEqual({
      format: 'Q3.12',
      rounding: 'round-half-up',
      overflow: 'saturate',
    });
  });
});

describe('rounding modes, on worked examples', () => {
  // Values x / 2 (d = 1 dropped bit) and x / 4 (d = 2): [x, d, truncate, round-half-up, convergent].
  // truncate of two's complement is floor (common practice, no source); round half up adds half
  // an LSB and truncates, so ties go toward plus infinity (common practice, no source);
  // convergent rounding is round half to even, IEEE 754-2019 roundTiesToEven.
  const cases: [number, number, number, number, number][] = [
    [1, 1, 0, 1, 0], // 0.5
    [3, 1, 1, 2, 2], // 1.5
    [5, 1, 2, 3, 2], // 2.5
    [-1, 1, -1, 0, 0], // -0.5
    [-3, 1, -2, -1, -2], // -1.5
    [-5, 1, -3, -2, -2], // -2.5
    [9, 2, 2, 2, 2], // 2.25
    [-11, 2, -3, -3, -3], // -2.75
    [10, 2, 2, 3, 2], // 2.5
    [14, 2, 3, 4, 4], // 3.5
  ];
  for (const [x, d, t, h, c] of cases) {
    it(`${x} / 2^${d}`, () => {
      expect(shiftRound(BigInt(x), d, 'truncate')).toBe(BigInt(t));
      expect(shiftRound(BigInt(x), d, 'round-half-up')).toBe(BigInt(h));
      expect(shiftRound(BigInt(x), d, 'convergent')).toBe(BigInt(c));
    });
  }

  it('wraps modulo 2^bits or saturates at the ends of the format', () => {
    // Two's complement of 8 bits: 128 wraps to -128, -129 to 127 (common practice, no source).
    const q07 = parseNumberFormat('Q0.7') as Exclude<ReturnType<typeof parseNumberFormat>, string>;
    expect(fitFormat(128n, q07, 'wrap')).toEqual({ value: -128n, overflow: true });
    expect(fitFormat(-129n, q07, 'wrap')).toEqual({ value: 127n, overflow: true });
    expect(fitFormat(128n, q07, 'saturate')).toEqual({ value: 127n, overflow: true });
    expect(fitFormat(-300n, q07, 'saturate')).toEqual({ value: -128n, overflow: true });
    expect(fitFormat(-128n, q07, 'saturate')).toEqual({ value: -128n, overflow: false });
    const uq08 = parseNumberFormat('UQ0.8') as Exclude<ReturnType<typeof parseNumberFormat>, string>;
    expect(fitFormat(-1n, uq08, 'saturate')).toEqual({ value: 0n, overflow: true });
    expect(fitFormat(256n, uq08, 'wrap')).toEqual({ value: 0n, overflow: true });
  });
});

describe('bit growth', () => {
  it("an FIR's worst-case gain is the sum of its absolute coefficients", () => {
    // Common practice, no source: |y| <= sum |c_k| * max |x|, reached by x[n-k] = sign(c_k) max|x|.
    const c = [0.5, -0.25, 0.125, 0.75];
    const d = load(
      `format: pleat/1\nname: fir\nfixed_point: { format: Q2.13 }\nunits:\n  - { id: A, kind: add, stages: 0 }\n  - { id: M, kind: mul, stages: 0 }\nnodes:\n  - { id: x, kind: input, format: Q0.15 }\n` +
        c.map((v, k) => `  - { id: m${k}, kind: mul, coefficient: ${v} }\n`).join('') +
        `  - { id: s, kind: add }\n  - { id: y, kind: output }\nedges:\n` +
        c.map((_, k) => `  - { from: x, to: m${k}, delays: ${k} }\n  - { from: m${k}, to: s }\n`).join('') +
        `  - { from: s, to: y }\nfolding:\n  factor: 4\n  sets: { M: [m0, m1, m2, m3], A: [~, ~, ~, s] }\n`,
    );
    const g = resolveArithmetic(d).graph!;
    const growth = bitGrowth(d, g, formatPlan(d, 16));
    expect(growth.method).toBe('impulse-response');
    const y = growth.signals.find((s) => s.node === 'y')!;
    const sumAbs = c.reduce((a, v) => a + Math.abs(v), 0);
    const P = c.filter((v) => v > 0).reduce((a, v) => a + v, 0);
    const N = c.filter((v) => v < 0).reduce((a, v) => a - v, 0);
    // Q0.15 spans [-1, 1 - 2^-15], so the extremes follow the signs: -P - N(1 - 2^-15) and
    // P(1 - 2^-15) + N, both within one input LSB of the symmetric bound sum|c| * max|x|.
    expect(y.lo).toBeCloseTo(-P - N * (1 - 2 ** -15), 12);
    expect(y.hi).toBeCloseTo(P * (1 - 2 ** -15) + N, 12);
    expect(Math.max(-y.lo, y.hi)).toBeLessThanOrEqual(sumAbs);
    expect(Math.max(-y.lo, y.hi)).toBeGreaterThan(sumAbs * (1 - 2 ** -15));
    expect(y.neededInt).toBe(1);
    expect(y.tooNarrow).toBe(false);
  });

  it("bounds a biquad by the l1 norm of its impulse response (independent recursion)", () => {
    const d = load(readFileSync(path.join(FIXTURES, 'notch-biquad-q.fold.yaml'), 'utf8'));
    const g = resolveArithmetic(d).graph!;
    const growth = bitGrowth(d, g, formatPlan(d, 16));
    // Independent reference: the difference equation of the fixture's direct form I, run here
    // in doubles: y[n] = .9x[n] - 1.6x[n-1] + .9x[n-2] + 1.5y[n-1] - .8y[n-2], impulse input.
    const h: number[] = [];
    const x = (n: number) => (n === 0 ? 1 : 0);
    for (let n = 0; n < 20000; n++) h.push(0.9 * x(n) - 1.6 * x(n - 1) + 0.9 * x(n - 2) + 1.5 * (h[n - 1] ?? 0) - 0.8 * (h[n - 2] ?? 0));
    const l1 = h.reduce((a, v) => a + Math.abs(v), 0);
    const P = h.filter((v) => v > 0).reduce((a, v) => a + v, 0);
    const N = h.filter((v) => v < 0).reduce((a, v) => a - v, 0);
    const y = growth.signals.find((s) => s.node === 'y')!;
    // Input Q0.15 in [-1, 1 - 2^-15]: the worst case follows the signs of h, -P - N(1 - 2^-15);
    // the engine's bound never falls below it and is tight (its tail estimate adds a little).
    const worst = P + N * (1 - 2 ** -15);
    expect(-y.lo).toBeGreaterThanOrEqual(worst * (1 - 1e-12));
    expect(-y.lo).toBeLessThan(worst * (1 + 1e-6));
    expect(-y.lo).toBeLessThanOrEqual(l1 * (1 + 1e-6));
    expect(y.neededInt).toBe(Math.ceil(Math.log2(l1 + 1e-12)));
  });

  it('finds the formats that are too narrow, as warnings at the node', () => {
    const d = load(readFileSync(path.join(FIXTURES, 'notch-biquad.fold.yaml'), 'utf8'));
    const growth = bitGrowth(d, resolveArithmetic(d).graph!, formatPlan(d, 16));
    const narrow = growth.diagnostics.map((x) => x.message.split('`')[1]);
    expect(narrow).toContain('y');
    expect(growth.diagnostics.every((x) => x.code === 'format-too-narrow' && x.severity === 'warning')).toBe(true);
  });
});

describe('fixed point per signal', () => {
  it("is today's W-bit arithmetic when the file names no format", () => {
    // The documented default (docs/rtl.md): every signal Q(W-1).0, truncate, wrap; checked
    // against fixedArithmetic, the number system the RTL has used so far, on random designs.
    for (let seed = 1; seed <= 60; seed++) {
      const { design } = randomDesign(seed);
      const g = resolveArithmetic(design).graph;
      if (!g) continue;
      for (const width of [8, 16]) {
        const fixed = { width, coefFrac: 6 };
        const ids = design.nodes.filter((n) => n.kind === 'input').map((n) => n.id);
        const inputs = randomStreams(ids, 40, seed, width);
        const old = evaluateReference(design, g, fixedArithmetic(fixed), inputs, 40);
        const now = evaluateReference(design, g, formatArithmetic(design, g, formatPlan(design, width), fixed), inputs, 40);
        expect(now.outputs, `seed ${seed}`).toEqual(old.outputs);
      }
    }
  });

  it('shows a biquad whose exact values leave 16 bits, instead of a bare match', () => {
    const d = load(readFileSync(path.join(FIXTURES, 'notch-biquad.fold.yaml'), 'utf8'));
    const exact = simulateDesign(d, analyze(d), { iterations: 32 }).report!;
    expect(exact.match).toBe(true);
    expect(exact.fixedPoint.overflowKind).toBe('exact-out-of-range');
    expect(exact.fixedPoint.overflowCount).toBeGreaterThan(0);
    const fixed = simulateDesign(d, analyze(d), { iterations: 32, arithmetic: 'fixed' }).report!;
    expect(fixed.match).toBe(true); // bit for bit against the integer reference
    expect(fixed.fixedPoint.overflowCount).toBeGreaterThan(0);
    expect(fixed.fixedPoint.overflows[0].firstCycle).not.toBeNull();
    expect(fixed.fixedPoint.accuracy![0].sqnrDb!).toBeLessThan(20);
  });

  it('folds a design of mixed formats and modes without changing one bit', () => {
    // The folded datapath (built from the control tables) against the unfolded graph, both in
    // the formats of the file: every rounding and overflow mode, overflows included.
    const d = load(readFileSync(path.join(FIXTURES, 'mixed-formats.fold.yaml'), 'utf8'));
    const r = simulateDesign(d, analyze(d), { iterations: 200, arithmetic: 'fixed' }).report!;
    expect(r.firstMismatch).toBeNull();
    expect(r.fixedPoint.overflowCount).toBeGreaterThan(0);
    expect(r.fixedPoint.overflows.every((o) => o.firstCycle !== null)).toBe(true);
  });

  it('keeps a scaled biquad within a few LSBs of the exact model', () => {
    const d = load(readFileSync(path.join(FIXTURES, 'notch-biquad-q.fold.yaml'), 'utf8'));
    const r = simulateDesign(d, analyze(d), { iterations: 300, arithmetic: 'fixed' }).report!;
    expect(r.match).toBe(true);
    expect(r.fixedPoint.overflowCount).toBe(0);
    const a = r.fixedPoint.accuracy![0];
    // Five products rounded to Q3.12 feed a loop of gain l1 < 40: the error stays below
    // 5 * l1 / 2 LSB (half an LSB per rounding, common practice, no source).
    expect(a.maxErrorLsb).toBeLessThan(100);
    expect(a.sqnrDb!).toBeGreaterThan(40);
  });
});
