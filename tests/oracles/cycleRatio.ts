// The iteration bound by brute force: every elementary loop of the DFG, enumerated by
// elementary-circuits-directed-graph (npm, Johnson's 1975 algorithm), with exact fractions.
import findCircuits from 'elementary-circuits-directed-graph';
import type { Design } from '../../shared/types';

function gcd(a: bigint, b: bigint): bigint {
  while (b !== 0n) [a, b] = [b, a % b];
  return a < 0n ? -a : a;
}

export interface Brute {
  loops: number;
  /** Largest sum(time)/sum(delays), reduced, or null without loops. */
  bound: { num: bigint; den: bigint } | null;
  /** Largest ceil(sum(stages)/sum(delays)), at least 1. */
  factorLowerBound: number;
}

/** Every elementary loop of the DFG, with exact sums, straight from the design. */
export function bruteForce(design: Design, exact: Map<number, { num: bigint; den: bigint }>): Brute {
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
export function loopRatio(design: Design, loop: string[], exact: Map<number, { num: bigint; den: bigint }>) {
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
    if (ws.length === 0) throw new Error(`edge ${loop[k]} -> ${next} of the critical loop is not in the design`);
    delays += ws.reduce((a, b) => (b < a ? b : a));
  }
  const g = gcd(num, den * delays);
  return { num: num / g, den: (den * delays) / g };
}
