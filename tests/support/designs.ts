// Builds Design objects for tests without going through YAML or validation: a design from a
// compact spec, a refolding at another N, and a large cascade of second-order sections.
import { seededRandom } from '../../shared/hardware/arith';
import type { Design, DfgNode } from '../../shared/types';

export interface DesignSpec {
  name?: string;
  factor: number;
  latency?: 'free' | 'fixed';
  clockNs?: number;
  kinds?: Record<string, { time: number }>;
  /** [id, kind, stages] */
  units: [string, string, number][];
  /** Operation nodes as [id, kind] or full nodes (inputs/outputs included). */
  nodes: ([string, string] | DfgNode)[];
  /** [from, to, delays?] */
  edges: [string, string, number?][];
  sets: Record<string, (string | null)[]>;
}

export function makeDesign(spec: DesignSpec): Design {
  return {
    format: 'pleat/1',
    name: spec.name ?? 'test-design',
    ...(spec.clockNs !== undefined ? { clockNs: spec.clockNs } : {}),
    kinds: spec.kinds ?? {},
    units: spec.units.map(([id, kind, stages]) => ({ id, kind, stages })),
    nodes: spec.nodes.map((n) => (Array.isArray(n) ? { id: n[0], kind: n[1] } : n)),
    edges: spec.edges.map(([from, to, delays]) => ({ from, to, delays: delays ?? 0 })),
    folding: { factor: spec.factor, sets: spec.sets, latency: spec.latency ?? 'free' },
  };
}

/** Small seeded PRNG (mulberry32, the one the simulator seeds its input streams with), so that
 * every random design can be rebuilt from its seed. */
export const rng = seededRandom;

/** Fisher-Yates, in place, with the given PRNG. */
export function shuffle<T>(xs: T[], r: () => number): T[] {
  for (let i = xs.length - 1; i > 0; i--) {
    const j = Math.floor(r() * (i + 1));
    [xs[i], xs[j]] = [xs[j], xs[i]];
  }
  return xs;
}

/** The same design with folding factor N' and every set (and boundary slot) placed anew at random. */
export function refold(design: Design, factor: number, seed: number): Design {
  const r = rng(seed);
  const sets: Record<string, (string | null)[]> = {};
  for (const [unit, set] of Object.entries(design.folding.sets)) {
    const ids = set.filter((x): x is string => x !== null);
    if (ids.length > factor) throw new Error(`set of ${unit} does not fit in ${factor} partitions`);
    const positions = shuffle(Array.from({ length: factor }, (_, p) => p), r).slice(0, ids.length);
    const out = new Array<string | null>(factor).fill(null);
    ids.forEach((id, i) => (out[positions[i]] = id));
    sets[unit] = out;
  }
  const nodes = design.nodes.map((n) =>
    n.slot !== undefined ? { ...n, slot: Math.floor(r() * factor) } : n,
  );
  return { ...design, nodes, folding: { ...design.folding, factor, sets } };
}

/**
 * A large design: `sections` second-order sections in cascade, each shaped like the folded
 * IIR section of the published example (4 adders, 4 multipliers, 12 edges with the link to the
 * next section), `perUnit` sections sharing one adder and one multiplier, so N = 4 * perUnit.
 * Positions follow the section order (a feasible folding that needs retiming on the links
 * between sections) or are shuffled (usually infeasible).
 */
export function cascadeDesign(sections: number, perUnit = 2, options: { shuffled?: boolean; seed?: number } = {}): Design {
  const r = rng(options.seed ?? 1);
  const N = 4 * perUnit;
  const nodes: DfgNode[] = [{ id: 'x', kind: 'input' }, { id: 'y', kind: 'output' }];
  const edges: [string, string, number][] = [];
  const units: [string, string, number][] = [];
  const sets: Record<string, (string | null)[]> = {};
  let prev = 'x';
  for (let s = 0; s < sections; s++) {
    const n = (k: number) => `s${s}_${k}`;
    for (let k = 1; k <= 4; k++) nodes.push({ id: n(k), kind: 'add' });
    for (let k = 5; k <= 8; k++) nodes.push({ id: n(k), kind: 'mul' });
    edges.push(
      [prev, n(1), 0],
      [n(1), n(2), 1], [n(1), n(5), 1], [n(1), n(6), 1], [n(1), n(7), 1], [n(1), n(8), 2],
      [n(3), n(1), 0], [n(4), n(2), 0], [n(5), n(3), 0], [n(6), n(4), 1], [n(7), n(3), 1], [n(8), n(4), 1],
    );
    prev = n(2);
    const u = Math.floor(s / perUnit);
    if (s % perUnit === 0) {
      units.push([`ADD${u}`, 'add', 1], [`MUL${u}`, 'mul', 2]);
      sets[`ADD${u}`] = [];
      sets[`MUL${u}`] = [];
    }
    sets[`ADD${u}`].push(n(4), n(2), n(3), n(1));
    sets[`MUL${u}`].push(n(5), n(8), n(6), n(7));
  }
  edges.push([prev, 'y', 0]);
  if (options.shuffled) {
    for (const id of Object.keys(sets)) {
      const set = sets[id];
      while (set.length < N) set.push(null);
      shuffle(set, r);
    }
  }
  return makeDesign({ name: `cascade-${sections}`, factor: N, units, nodes, edges, sets });
}
