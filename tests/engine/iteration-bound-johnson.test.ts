// The iteration bound and the folding-factor lower bound against brute force over every loop,
// the loops enumerated by elementary-circuits-directed-graph (npm, Johnson's 1975 algorithm)
// and the ratios compared as exact fractions.
import { describe, expect, it } from 'vitest';
import findCircuits from 'elementary-circuits-directed-graph';
import { analyze } from '../../shared/analysis/analyze';
import type { Design } from '../../shared/types';
import { DECIMAL_TIMES, makeDesign, randomDesign } from './helpers';

const exactTime = new Map(DECIMAL_TIMES.map(([x, num, den]) => [x, { num, den }]));

function gcd(a: bigint, b: bigint): bigint {
  while (b !== 0n) [a, b] = [b, a % b];
  return a < 0n ? -a : a;
}

interface Brute {
  loops: number;
  /** Largest sum(time)/sum(delays), reduced, or null without loops. */
  bound: { num: bigint; den: bigint } | null;
  /** Largest ceil(sum(stages)/sum(delays)), at least 1. */
  factorLowerBound: number;
}

/** Every elementary loop of the DFG, with exact sums, straight from the design. */
function bruteForce(design: Design, exact: Map<number, { num: bigint; den: bigint }>): Brute {
  const index = new Map(design.nodes.map((n, i) => [n.id, i]));
  const stages = new Map<string, number>();
  for (const u of design.units) for (const id of design.folding.sets[u.id] ?? []) if (id) stages.set(id, u.stages);
  // Node time by docs/format.md: its own time, else its kind's, else the stages of its unit.
  const time = design.nodes.map((n) => {
    if (n.kind === 'input' || n.kind === 'output') return { num: 0n, den: 1n };
    const t = n.time ?? design.kinds[n.kind]?.time;
    if (t !== undefined) return exact.get(t)!;
    return { num: BigInt(stages.get(n.id)!), den: 1n };
  });
  const stageOf = design.nodes.map((n) => BigInt(stages.get(n.id) ?? 0));
  // Between two nodes only the edge with fewest delays matters: sums of times and stages are
  // nonnegative, so fewer delays never lowers a loop's ratio.
  const fewest = new Map<string, bigint>();
  const selfLoops: { node: number; delays: bigint }[] = [];
  for (const e of design.edges) {
    const a = index.get(e.from)!;
    const b = index.get(e.to)!;
    if (a === b) {
      selfLoops.push({ node: a, delays: BigInt(e.delays) });
      continue;
    }
    const key = `${a},${b}`;
    const w = BigInt(e.delays);
    if (!fewest.has(key) || w < fewest.get(key)!) fewest.set(key, w);
  }
  const adjacency: number[][] = design.nodes.map(() => []);
  for (const key of fewest.keys()) {
    const [a, b] = key.split(',').map(Number);
    adjacency[a].push(b);
  }
  // The package finds loops of two or more nodes; one-node loops (self-loops) are added here.
  const loops: { nodes: number[]; delays: bigint }[] = selfLoops.map((s) => ({ nodes: [s.node], delays: s.delays }));
  for (const circuit of findCircuits(adjacency.map((l) => l.slice()))) {
    const nodes = circuit.slice(0, -1);
    if (nodes.length < 2) continue;
    let delays = 0n;
    for (let k = 0; k < nodes.length; k++) delays += fewest.get(`${nodes[k]},${nodes[(k + 1) % nodes.length]}`)!;
    loops.push({ nodes, delays });
  }
  let bound: { num: bigint; den: bigint } | null = null;
  let flb = 1;
  for (const loop of loops) {
    let num = 0n;
    let den = 1n;
    let st = 0n;
    for (const v of loop.nodes) {
      num = num * time[v].den + time[v].num * den;
      den *= time[v].den;
      st += stageOf[v];
    }
    den *= loop.delays; // ratio = (num/den) / delays
    const g = gcd(num, den);
    const r = { num: num / g, den: den / g };
    if (!bound || r.num * bound.den > bound.num * r.den) bound = r;
    const c = Number((st + loop.delays - 1n) / loop.delays);
    if (c > flb) flb = c;
  }
  return { loops: loops.length, bound, factorLowerBound: flb };
}

/** The ratio of the loop the engine names as critical, by the same exact arithmetic. */
function loopRatio(design: Design, loop: string[], exact: Map<number, { num: bigint; den: bigint }>) {
  const stages = new Map<string, number>();
  for (const u of design.units) for (const id of design.folding.sets[u.id] ?? []) if (id) stages.set(id, u.stages);
  let num = 0n;
  let den = 1n;
  let delays = 0n;
  for (let k = 0; k < loop.length; k++) {
    const node = design.nodes.find((n) => n.id === loop[k])!;
    const t = node.time ?? design.kinds[node.kind]?.time;
    const q = t !== undefined ? exact.get(t)! : { num: BigInt(stages.get(node.id) ?? 0), den: 1n };
    num = num * q.den + q.num * den;
    den *= q.den;
    const next = loop[(k + 1) % loop.length];
    const ws = design.edges.filter((e) => e.from === loop[k] && e.to === next).map((e) => BigInt(e.delays));
    expect(ws.length, `edge ${loop[k]} -> ${next} of the critical loop`).toBeGreaterThan(0);
    delays += ws.reduce((a, b) => (b < a ? b : a));
  }
  const g = gcd(num, den * delays);
  return { num: num / g, den: (den * delays) / g };
}

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
