// Method: lower bounds of folding: the folding-factor bound of shared/analysis/iterationBound.ts (maximum cycle
// ratio of stages over delays), unit slots per kind, constraint cycles through the boundary, and a loop bound on registers.
// Convention: stages are each kind's fewest (a bound over every binding); registers >= ceil(sum of forced lifetimes / N).
import { withArticle } from '../design/diagnostics';
import type { Design } from '../types';
import { buildGraph } from '../analysis/graph';
import { factorLowerBound, loopStructure } from '../analysis/iterationBound';
import { OP, buildProblem, operationsPerKind, type PlanProblem } from './problem';
import { heights, minimumHeights, minimumStages } from './heuristic';

export interface PlanBounds {
  /** Smallest N any folding onto these kinds of units allows (fewest stages per kind). */
  factorLowerBound: number;
  /** Per kind: operations, units, slots (units * N). */
  kinds: Record<string, { operations: number; units: number; slots: number }>;
  feasibleByBounds: boolean;
  reasons: string[];
  /** Smallest N and unit counts that could admit a plan (necessary, not sufficient). */
  suggestion: { factor?: number; units?: Record<string, number> } | null;
  /** Proven lower bound on the lifetime-analysis minimum (docs/planning.md). */
  registers: number;
}

/** factorLowerBound of the design with every operation on a unit of its kind with the fewest stages. */
export function planFactorLowerBound(p: PlanProblem): number {
  const minUnit = new Map<string, string>();
  for (const [kind, list] of p.kindUnits) {
    let best = list[0];
    for (const k of list) if (p.unitStages[k] < p.unitStages[best]) best = k;
    minUnit.set(kind, p.units[best].id);
  }
  const sets: Record<string, (string | null)[]> = {};
  for (const u of p.units) sets[u.id] = [];
  for (let o = 0; o < p.ops.length; o++) {
    const unit = p.pinUnit[o] >= 0 ? p.units[p.pinUnit[o]].id : minUnit.get(p.opKind[o]);
    if (unit === undefined) continue;
    sets[unit].push(p.nodeIds[p.ops[o]]);
  }
  const d: Design = { ...p.design, units: p.units, folding: { ...p.design.folding, factor: p.N, sets } };
  const g = buildGraph(d);
  return factorLowerBound(g, loopStructure(g));
}

const listed = (xs: string[]) => (xs.length <= 6 ? xs.join(', ') : `${xs.slice(0, 6).join(', ')} and ${xs.length - 6} more`);

/** Bounds of one problem (N and units fixed). */
export function planBounds(p: PlanProblem): PlanBounds {
  const N = p.N;
  const reasons: string[] = [];
  const perKind = operationsPerKind(p);
  const kinds: PlanBounds['kinds'] = {};
  const unitsNeeded: Record<string, number> = {};
  let short = false;
  for (const [kind, ops] of perKind) {
    const units = p.kindUnits.get(kind)?.length ?? 0;
    kinds[kind] = { operations: ops, units, slots: units * N };
    unitsNeeded[kind] = Math.max(units, Math.ceil(ops / N));
    if (ops > units * N) {
      short = true;
      reasons.push(
        units === 0
          ? `no unit executes kind \`${kind}\` (${count(ops, 'operation')}); add at least ${count(Math.ceil(ops / N), 'unit')} of that kind`
          : `kind \`${kind}\` has ${count(ops, 'operation')} but ${units === 1 ? withArticle(`\`${kind}\``, kind) + ' unit' : `${units} \`${kind}\` units`} x N = ${N} ${units === 1 ? 'gives' : 'give'} only ${count(units * N, 'slot')}; it needs at least ${count(Math.ceil(ops / N), 'unit')} at this N`,
      );
    }
  }
  const hasAllKinds = [...perKind.keys()].every((k) => p.kindUnits.has(k));
  const fBound = hasAllKinds ? planFactorLowerBound(p) : 1;
  let factorShort = false;
  if (N < fBound) {
    factorShort = true;
    reasons.push(
      `N = ${N} is below the folding-factor lower bound ${fBound}: some loop has more pipeline stages than N times its delays (with each kind's fewest stages), so no positions can make its folded delays nonnegative`,
    );
  }
  // constraint cycles that remain at this N: fixed latency between inputs and outputs, pins
  let cycleShort = false;
  if (!factorShort && hasAllKinds) {
    const h = minimumHeights(p);
    if ('cycle' in h) {
      cycleShort = true;
      const names = h.cycle.map((k) => {
        const e = p.arcs[k].edge;
        return p.nodeIds[p.edgeFrom[e]];
      });
      const along = names.length ? `the path ${listed(names.reverse())}` : 'a path';
      reasons.push(
        p.latency === 'fixed'
          ? `with fixed latency ${along} from the inputs to the outputs needs more cycles than N = ${N} leaves (or the slots of the inputs and outputs forbid it); set folding.latency to free or raise N`
          : `the constraints along ${along.replace(/^the path /, '').replace(/^a path$/, 'a loop')} cannot all hold at N = ${N}`,
      );
    }
  }
  let suggestion: PlanBounds['suggestion'] = null;
  if (short || factorShort || cycleShort) {
    suggestion = {};
    let f = Math.max(N, fBound);
    if (cycleShort || factorShort) {
      // smallest N past the bounds whose constraint graph has no positive cycle
      let found = false;
      for (let tries = 0; tries < 256 && !found; tries++, f++) {
        const q = buildProblem(p.design, f, p.units);
        if (f >= fBound && !('cycle' in heights(q, minimumStages(q)))) found = true;
      }
      // no larger N helps (e.g. fixed latency with input and output slots that leave no room): no factor to suggest
      if (found) suggestion.factor = f - 1;
    }
    if (short) {
      // more units at this N, or the N that fits the given units
      suggestion.units = unitsNeeded;
      let fit = f;
      for (const [kind, ops] of perKind) {
        const units = p.kindUnits.get(kind)?.length ?? 0;
        if (units > 0) fit = Math.max(fit, Math.ceil(ops / units));
      }
      if (fit > N && [...perKind.keys()].every((k) => (p.kindUnits.get(k)?.length ?? 0) > 0)) suggestion.factor = fit;
    }
  }
  return {
    factorLowerBound: fBound,
    kinds,
    feasibleByBounds: !short && !factorShort && !cycleShort,
    reasons,
    suggestion,
    registers: registerLowerBound(p),
  };
}

/**
 * Around any loop the retimed folded delays sum to N * delays - stages whatever the slots and the
 * retiming, and each edge's delay is at most its producer's lifetime. So node-disjoint loops
 * force sum(lifetimes) >= sum over them of (N * delays - stages), and since sum_t live(t) is
 * the sum of the lifetimes, registers >= ceil(that / N). Loops are found greedily (one per
 * edge with delays, by breadth-first search back to its tail), stages at each kind's most.
 */
export function registerLowerBound(p: PlanProblem): number {
  const N = p.N;
  const nN = p.nodeIds.length;
  const maxStages = new Map<string, number>();
  for (const [kind, list] of p.kindUnits) maxStages.set(kind, Math.max(...list.map((k) => p.unitStages[k])));
  const stagesOf = (v: number) => (p.role[v] !== OP ? 0 : p.pinUnit[p.opOf[v]] >= 0 ? p.unitStages[p.pinUnit[p.opOf[v]]] : (maxStages.get(p.opKind[p.opOf[v]]) ?? 0));
  const m = p.edgeFrom.length;
  const out: number[][] = Array.from({ length: nN }, () => []);
  for (let e = 0; e < m; e++) out[p.edgeFrom[e]].push(e);
  const used = new Uint8Array(nN);
  const loops: { value: number; nodes: number[] }[] = [];
  const seenFrom = new Int32Array(nN).fill(-1);
  const parent = new Int32Array(nN);
  let budget = 2_000_000; // bounded work on huge designs: the bound only gets weaker
  for (let e0 = 0; e0 < m && budget > 0; e0++) {
    if (p.edgeDelays[e0] === 0) continue;
    const u = p.edgeFrom[e0];
    const v = p.edgeTo[e0];
    if (p.role[u] !== OP || p.role[v] !== OP) continue;
    // shortest path (in edges) v -> u, closing the loop with e0
    const queue = [v];
    seenFrom[v] = e0;
    parent[v] = -1;
    let found = u === v;
    for (let h = 0; h < queue.length && !found && budget > 0; h++) {
      const x = queue[h];
      for (const e of out[x]) {
        budget--;
        const y = p.edgeTo[e];
        if (seenFrom[y] === e0 || p.role[y] !== OP) continue;
        seenFrom[y] = e0;
        parent[y] = e;
        if (y === u) {
          found = true;
          break;
        }
        queue.push(y);
      }
    }
    if (!found) continue;
    const nodes: number[] = [u];
    let delays = p.edgeDelays[e0];
    let stages = stagesOf(u);
    for (let y = u; y !== v; ) {
      const e = parent[y];
      const x = p.edgeFrom[e];
      delays += p.edgeDelays[e];
      nodes.push(x);
      stages += stagesOf(x);
      y = x;
    }
    const value = N * delays - stages;
    if (value > 0) loops.push({ value, nodes: [...new Set(nodes)] });
  }
  loops.sort((a, b) => b.value - a.value);
  let total = 0;
  for (const l of loops) {
    if (l.nodes.some((x) => used[x])) continue;
    for (const x of l.nodes) used[x] = 1;
    total += l.value;
  }
  return Math.ceil(total / N);
}

function count(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}
