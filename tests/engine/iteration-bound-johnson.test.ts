// The iteration bound and the folding-factor lower bound against brute force over every loop,
// the loops enumerated by elementary-circuits-directed-graph (npm, Johnson's 1975 algorithm)
// and the ratios compared as exact fractions.
import { describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';
import { makeDesign } from '../support/designs';
import { DECIMAL_TIMES, randomDesign } from '../support/randomDesign';
import { bruteForce, loopRatio } from '../oracles/cycleRatio';

const exactTime = new Map(DECIMAL_TIMES.map(([x, num, den]) => [x, { num, den }]));

describe('iteration bound = brute force over all loops (Johnson 1975, elementary-circuits-directed-graph)', () => {
  it('on 300 random designs with decimal times', () => {
    let withLoops = 0;
    for (let seed = 1; seed <= 300; seed++) {
      const design = randomDesign(seed, { maxOps: 7, times: true, maxStages: 4 });
      const a = analyze(design);
      const brute = bruteForce(design, exactTime);
      // Source: elementary-circuits-directed-graph (npm), every loop enumerated, exact fractions.
      if (brute.bound === null) expect(a.iterationBound, `seed ${seed}`).toBeNull();
      else {
        withLoops++;
        expect(a.iterationBound, `seed ${seed}`).not.toBeNull();
        expect([BigInt(a.iterationBound!.numerator), BigInt(a.iterationBound!.denominator)], `seed ${seed}`).toEqual([
          brute.bound.num,
          brute.bound.den,
        ]);
        // The loop named as critical is a loop of the DFG with exactly that ratio.
        expect(loopRatio(design, a.iterationBound!.loop, exactTime)).toEqual(brute.bound);
      }
      // Source: same enumeration; max over loops of ceil(stages / delays), at least 1.
      expect(a.factorLowerBound, `seed ${seed}`).toBe(brute.factorLowerBound);
    }
    expect(withLoops).toBeGreaterThan(150);
  });

  it('stays exact when the sums pass 2^53 (integers switch to bigint)', () => {
    // 98765432.125 = 790123457/8 exactly; with delays near 10^9 the products pass 2^53.
    const big = new Map([[98765432.125, { num: 790123457n, den: 8n }], ...exactTime]);
    const design: Design = makeDesign({
      factor: 3,
      units: [['A', 'add', 1]],
      kinds: { add: { time: 98765432.125 } },
      nodes: [['a', 'add'], ['b', 'add'], { id: 'c', kind: 'add', time: 0.1 }],
      edges: [
        ['a', 'b', 999_999_937],
        ['b', 'a', 3],
        ['b', 'c', 0],
        ['c', 'a', 999_999_999],
        ['a', 'a', 999_999_998],
      ],
      sets: { A: ['a', 'b', 'c'] },
    });
    const a = analyze(design);
    const brute = bruteForce(design, big);
    // Source: elementary-circuits-directed-graph (npm) enumeration with exact bigint fractions.
    expect([BigInt(a.iterationBound!.numerator), BigInt(a.iterationBound!.denominator)]).toEqual([brute.bound!.num, brute.bound!.den]);
    expect(a.factorLowerBound).toBe(brute.factorLowerBound);
  });
});
