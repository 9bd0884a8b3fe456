// The engine against a published worked example: the folded second-order IIR section of
// K. K. Parhi, "VLSI Digital Signal Processing Systems" (Wiley, 1999), chapter 6.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { parhiIirFolded, PUBLISHED_FOLDED_DELAYS } from '../fixtures/published/parhi-iir-folded';
import { allocationProblems, type TestLifetime } from '../oracles/lifetimes';

describe('Parhi (1999) ch. 6: folded IIR section, N = 4', () => {
  const design = parhiIirFolded();
  const a = analyze(design);

  it('gives the published folded delay of every edge', () => {
    for (const e of a.edges) {
      if (e.from === 'x' || e.to === 'y') continue; // boundary edges are ours, not the book's
      // Source: Parhi 1999, ch. 6, folded delays of the IIR example (values from memory of the book).
      expect(e.foldedDelay, `${e.from}->${e.to}`).toBe(PUBLISHED_FOLDED_DELAYS[`${e.from}->${e.to}`]);
    }
    expect(a.edges.filter((e) => e.from !== 'x' && e.to !== 'y')).toHaveLength(11);
  });

  it('needs no retiming: the retimed DFG of the book already folds without negative delays', () => {
    // Source: Parhi 1999, ch. 6 (the example is folded after retiming, all folded delays >= 0).
    expect(a.retiming.needed).toBe(false);
    expect(a.retiming.feasible).toBe(true);
    expect(a.edges.map((e) => e.retimedFoldedDelay)).toEqual(a.edges.map((e) => e.foldedDelay));
  });

  it('needs 2 registers by lifetime analysis against 6 with one delay line per unit', () => {
    // Source: Parhi 1999, ch. 6: lifetime analysis of this example gives 2 registers; the
    // folded architecture with one delay line per unit uses 6 (5 after the adder, 1 after the
    // multiplier), values from memory of the book.
    expect(a.registers?.minimum).toBe(2);
    expect(a.registers?.delayLines).toBe(6);
  });

  it('allocates the variables to 2 registers consistently', () => {
    // Lifetimes from the published folded delays and the folding sets (tIn = position + stages,
    // tOut = tIn + largest published folded delay leaving the node), following docs/analysis.md.
    const position: Record<string, [number, number]> = {
      '1': [3, 1], '7': [3, 2], '8': [1, 2], '2': [1, 1], '3': [2, 1], '4': [0, 1], '5': [0, 2], '6': [2, 2],
    };
    const vars: TestLifetime[] = [];
    for (const [node, [slot, stages]] of Object.entries(position)) {
      const out = Object.entries(PUBLISHED_FOLDED_DELAYS).filter(([k]) => k.startsWith(`${node}->`)).map(([, d]) => d);
      const longest = Math.max(0, ...out);
      if (longest > 0) vars.push({ variable: node, tIn: slot + stages, tOut: slot + stages + longest });
    }
    expect(a.allocation).not.toBeNull();
    // Source: Parhi 1999, ch. 6: the forward-backward allocation of this example uses 2 registers.
    expect(a.allocation!.registers).toBe(2);
    expect(a.allocation!.method).toBe('forward-backward');
    expect(allocationProblems(a.allocation!, vars)).toEqual([]);
  });
});
