// Method: mixed-integer model in the style of the integer-programming formulations of rate-optimal static
// scheduling (Parhi and Messerschmitt 1989) and of modulo scheduling: binding x[v,u,t], integer retiming, time-indexed lifetimes.
// Convention: written in CPLEX LP format for an injected solver; lexicographic objective by weights; decoded plans are re-scored by the engine.
import { IN, OP, OUT, setsFromAssignment, designWithSets, type Arc, type PlanProblem } from './problem';

const mod = (a: number, n: number) => ((a % n) + n) % n;
import { compareMetrics, evaluateDesign, primary } from './evaluate';
import { engineSearch } from './heuristic';
import type { MilpSolution, MilpSolver, PlanMetrics, PlanObjective } from './types';

export interface ExactOptions {
  objective: PlanObjective;
  solver: MilpSolver;
  timeLimitSeconds: number;
  /** Best plan known (the heuristic's): sets the lifetime horizon, and is kept when the model does no better. */
  incumbent: PlanMetrics | null;
  incumbentSets: Record<string, (string | null)[]> | null;
  now: () => number;
  deadline: number;
  signal?: { aborted: boolean };
  /** Most re-solves after a decoded plan scores worse in the engine than in the model; default 12. */
  maxCuts?: number;
}

export interface ExactResult {
  sets: Record<string, (string | null)[]> | null;
  metrics: PlanMetrics | null;
  /** Proven lower bound on the primary objective (null when the model gives none). */
  bound: number | null;
  provenOptimal: boolean;
  /** The model proved that no plan exists. */
  infeasible: boolean;
  /** `sets` were found by the model, not handed in as the incumbent. */
  foundByModel: boolean;
  /** The solver answered at least once (no error, not skipped for lack of time). */
  solverAnswered: boolean;
  method: string;
  notes: string[];
}

export const EXACT_METHOD = 'exact: mixed-integer model';

/** A linear row under construction: coefficients by column name. */
class Row {
  readonly terms = new Map<string, number>();
  constant = 0;
  add(name: string, c: number): this {
    if (c !== 0) this.terms.set(name, (this.terms.get(name) ?? 0) + c);
    return this;
  }
  addRow(other: Row, factor = 1): this {
    for (const [k, v] of other.terms) this.add(k, v * factor);
    this.constant += other.constant * factor;
    return this;
  }
}

/** The model, as text plus what decoding needs. */
export interface ExactModel {
  lp: string;
  /** Column name of y[o,k,τ] (start of operation o on unit k at absolute cycle τ). */
  x: (o: number, k: number, t: number) => string;
  /** Start columns of each operation. */
  starts: { k: number; t: number; name: string }[][];
  /** Weight of the primary objective in the weighted sum (its value is floor(objective / weight)). */
  primaryWeight: number;
  /** Lifetime horizon used (cycles). */
  horizon: number;
  /** The objective is integral (registers alone): a dual bound b proves ceil(b). */
  integral: boolean;
  /** Values r(outputs) - r(inputs) the outputs' indicators range over (empty when the outputs have no variable). */
  outValues: number[];
  /** The units each start column's `k` stands for (a class of interchangeable units, or the unit alone). */
  classes: Map<number, number[]>;
  binding: 'classes' | 'units';
  columns: number;
  rows: number;
}

/**
 * `full`: the model of docs/planning.md; `feasibility`: placements and edge constraints only;
 * `lengths`: placements, edges, the check's retiming rule and the lifetime lengths, minimising
 * their sum (whose N-th part, rounded up, is a lower bound on the registers: the lifetime bound).
 */
export type ModelMode = 'full' | 'feasibility' | 'lengths';

export interface ModelOptions {
  mode?: ModelMode;
  /** Binaries written as columns in [0, 1] (the linear relaxation). */
  relax?: boolean;
  /** A proven lower bound on the registers, as a bound on the column (tightens the relaxation). */
  minRegisters?: number;
  /** Start binaries and output indicators (by column name) left out: fixed at 0 by reduced costs. */
  fixedOff?: Set<string>;
  /**
   * `classes` (default, except for the muxes objective): interchangeable units (one kind, the
   * same stages, no pins) are one column per start and cycle with their count as capacity, and
   * decoding hands them out; `units`: a column per unit (what the multiplexer proxy needs).
   */
  binding?: 'classes' | 'units';
}

function terms(row: Map<string, number>): string {
  const parts: string[] = [];
  let first = true;
  for (const [name, c] of row) {
    if (c === 0) continue;
    const sign = c < 0 ? '-' : first ? '' : '+';
    const mag = Math.abs(c);
    parts.push(`${sign ? sign + ' ' : ''}${mag === 1 ? '' : mag + ' '}${name}`);
    first = false;
  }
  // LP files keep lines short; a row may continue over several lines
  const lines: string[] = [];
  for (let i = 0; i < parts.length; i += 12) lines.push(parts.slice(i, i + 12).join(' '));
  return lines.join('\n   ') || '0 zero';
}

/**
 * Builds the model (docs/planning.md, "The exact model"), time-indexed: y[o,k,τ] = 1 when
 * operation o starts on unit k at absolute cycle τ = slot + N * r (its slot is τ mod N, its
 * retiming floor(τ / N); inputs sit at 0). Windows of τ come from the edge constraints and the
 * lifetime bound `maxLifetime` (the horizon). `cuts` exclude (slot, stages) assignments.
 */
export function buildExactModel(
  p: PlanProblem,
  objective: PlanObjective,
  maxLifetime: number,
  maxRegisters: number | null,
  cuts: { slot: Int32Array; stages: Int32Array }[] = [],
  options: ModelOptions = {},
): ExactModel {
  const mode = options.mode ?? 'full';
  const N = p.N;
  const n = p.ops.length;
  const rows: string[] = [];
  const binaries = new Set<string>();
  const generals = new Set<string>();
  const continuous = new Set<string>();
  const bounds: string[] = [];
  let rowCount = 0;
  const emit = (name: string, row: Row, sense: '<=' | '>=' | '=', rhs: number) => {
    if (row.terms.size === 0) return;
    rows.push(` ${name}: ${terms(row.terms)} ${sense} ${rhs - row.constant}`);
    rowCount++;
  };
  let maxStages = 0;
  let minStagesAll = Infinity;
  for (const s of p.unitStages) {
    maxStages = Math.max(maxStages, s);
    minStagesAll = Math.min(minStagesAll, s);
  }
  const kindMin = new Map<string, number>();
  const kindMax = new Map<string, number>();
  for (const [kind, list] of p.kindUnits) {
    kindMin.set(kind, Math.min(...list.map((k) => p.unitStages[k])));
    kindMax.set(kind, Math.max(...list.map((k) => p.unitStages[k])));
  }
  const S = p.scheduleNodes;
  const binding = options.binding ?? (objective === 'muxes' ? 'units' : 'classes');
  // Symmetry: units of one kind with the same stages and no pins are interchangeable (every metric
  // but the multiplexer proxy is unchanged when they are relabelled). With classes they share
  // columns (the class's first unit stands for it, its size is the capacity of a cycle); with
  // units, they are labelled by the first operation they run: the i-th unpinned operation of the
  // kind may only use the first i + 1 of them.
  const usable: number[][] = [];
  const classes = new Map<number, number[]>();
  const pinnedUnits = new Set<number>();
  for (let o = 0; o < n; o++) if (p.pinUnit[o] >= 0) pinnedUnits.add(p.pinUnit[o]);
  if (binding === 'classes') {
    const byKind = new Map<string, number[]>();
    for (const [kind, list] of p.kindUnits) {
      const reps: number[] = [];
      for (const k of list) {
        if (pinnedUnits.has(k)) {
          classes.set(k, [k]);
          reps.push(k);
          continue;
        }
        const r = reps.find((x) => !pinnedUnits.has(x) && p.unitStages[x] === p.unitStages[k]);
        if (r === undefined) {
          classes.set(k, [k]);
          reps.push(k);
        } else classes.get(r)!.push(k);
      }
      byKind.set(kind, reps);
    }
    for (let o = 0; o < n; o++) usable.push(p.pinUnit[o] >= 0 ? [p.pinUnit[o]] : (byKind.get(p.opKind[o]) ?? []));
  } else {
    for (const k of p.units.keys()) classes.set(k, [k]);
    const rank = new Map<string, number>();
    for (let o = 0; o < n; o++) {
      if (p.pinUnit[o] >= 0) {
        usable.push([p.pinUnit[o]]);
        continue;
      }
      const kind = p.opKind[o];
      const i = rank.get(kind) ?? 0;
      rank.set(kind, i + 1);
      const list: number[] = [];
      const seenPerStages = new Map<number, number>();
      for (const k of p.kindUnits.get(kind) ?? []) {
        if (pinnedUnits.has(k)) {
          list.push(k);
          continue;
        }
        const j = seenPerStages.get(p.unitStages[k]) ?? 0;
        seenPerStages.set(p.unitStages[k], j + 1);
        if (j <= i) list.push(k);
      }
      usable.push(list);
    }
  }
  const unitsOf = (o: number) => usable[o];
  const pMin = (a: number) => (a < n ? (p.pinUnit[a] >= 0 ? p.unitStages[p.pinUnit[a]] : kindMin.get(p.opKind[a])!) : 0);
  const pMax = (a: number) => (a < n ? (p.pinUnit[a] >= 0 ? p.unitStages[p.pinUnit[a]] : kindMax.get(p.opKind[a])!) : 0);
  const isTapArc = (arc: Arc) => p.role[p.edgeTo[arc.edge]] === OUT && p.boundarySlot[p.edgeTo[arc.edge]] < 0;
  const isHeldArc = (arc: Arc) => p.role[p.edgeFrom[arc.edge]] === IN && p.boundarySlot[p.edgeFrom[arc.edge]] < 0;

  // ---- windows of T by difference constraints (Bellman-Ford from the inputs' node, T = 0)
  // difference graph: T_b - T_a <= w is an arc a -> b of weight w
  const dFrom: number[] = [];
  const dTo: number[] = [];
  const dW: number[] = [];
  const le = (a: number, b: number, w: number) => {
    dFrom.push(a);
    dTo.push(b);
    dW.push(w);
  };
  for (const arc of p.arcs) {
    const cmin = arc.base + (arc.stages ? pMin(arc.a) : 0);
    le(arc.b, arc.a, -cmin); // T_b - T_a >= cmin
    if (isTapArc(arc)) continue;
    // its folded delay T_b - T_a - c (held inputs: less T_b mod N) is at most the lifetime bound
    const cmax = arc.base + (arc.stages ? pMax(arc.a) : 0);
    le(arc.a, arc.b, maxLifetime + cmax + (isHeldArc(arc) ? N - 1 : 0));
  }
  const anchor = p.inNode;
  const boundsFrom = (): { lo: Float64Array; hi: Float64Array } => {
    const relax = (reverse: boolean): Float64Array => {
      const dist = new Float64Array(S).fill(Infinity);
      dist[anchor] = 0;
      for (let pass = 0; pass < S + 1; pass++) {
        let changed = false;
        for (let i = 0; i < dFrom.length; i++) {
          const [a, b] = reverse ? [dTo[i], dFrom[i]] : [dFrom[i], dTo[i]];
          if (dist[a] + dW[i] < dist[b]) {
            dist[b] = dist[a] + dW[i];
            changed = true;
          }
        }
        if (!changed) break;
      }
      return dist;
    };
    const hi = relax(false);
    const lo = relax(true).map((d) => -d);
    return { lo, hi };
  };
  let { lo, hi } = boundsFrom();
  // nodes not tied to the inputs from both sides: a whole-iteration shift changes nothing, so the
  // first of each such group is tied to partitions 0..N-1 of iteration 0
  for (let guard = 0; guard < S; guard++) {
    let loose = -1;
    for (let o = 0; o < n; o++) if (!Number.isFinite(lo[o]) && !Number.isFinite(hi[o])) { loose = o; break; }
    if (loose < 0) break;
    le(anchor, loose, N - 1);
    le(loose, anchor, 0);
    ({ lo, hi } = boundsFrom());
  }
  // one side open (only lower bounds, e.g. towards taps): no later start than one turn past what its predecessors allow helps
  for (let guard = 0; guard < 3; guard++) {
    for (let x = 0; x < S; x++) {
      if (x === anchor) continue;
      if (Number.isFinite(lo[x]) && !Number.isFinite(hi[x])) {
        let h = lo[x];
        for (const arc of p.arcs) if (arc.b === x && Number.isFinite(hi[arc.a])) h = Math.max(h, hi[arc.a] + arc.base + (arc.stages ? pMax(arc.a) : 0));
        hi[x] = h + N - 1;
      }
      if (!Number.isFinite(lo[x]) && Number.isFinite(hi[x])) lo[x] = hi[x] - maxLifetime - N;
    }
  }
  for (let x = 0; x < S; x++) {
    if (!Number.isFinite(lo[x]) || !Number.isFinite(hi[x])) { lo[x] = 0; hi[x] = N - 1 + maxLifetime; }
    lo[x] = Math.ceil(lo[x]);
    hi[x] = Math.floor(hi[x]);
  }
  // Tighter: along any simple path the folded delays are lifetimes of distinct producers, whose sum
  // is at most sum_t live(t) <= N * registers <= maxLifetime (the horizon is set that way), so
  // T_v - T_anchor <= maxLifetime + the path's largest constants (taken >= 0), and the same backwards.
  {
    const upFrom: number[] = [];
    const upTo: number[] = [];
    const upW: number[] = [];
    for (const arc of p.arcs) {
      if (isTapArc(arc)) continue;
      const cmax = arc.base + (arc.stages ? pMax(arc.a) : 0) + (isHeldArc(arc) ? N - 1 : 0);
      upFrom.push(arc.a);
      upTo.push(arc.b);
      upW.push(Math.max(0, cmax));
    }
    for (let i = dFrom.length - 1; i >= 0 && i >= dFrom.length - 2 * S; i--) {
      // the anchoring arcs of loose groups (added last), as they are
      if (dFrom[i] === anchor || dTo[i] === anchor) {
        upFrom.push(dFrom[i]);
        upTo.push(dTo[i]);
        upW.push(Math.max(0, dW[i]));
      }
    }
    const sp = (reverse: boolean): Float64Array => {
      const dist = new Float64Array(S).fill(Infinity);
      dist[anchor] = 0;
      for (let pass = 0; pass < S + 1; pass++) {
        let changed = false;
        for (let i = 0; i < upFrom.length; i++) {
          const [a, b] = reverse ? [upTo[i], upFrom[i]] : [upFrom[i], upTo[i]];
          if (dist[a] + upW[i] < dist[b]) {
            dist[b] = dist[a] + upW[i];
            changed = true;
          }
        }
        if (!changed) break;
      }
      return dist;
    };
    const ahead = sp(false);
    const behind = sp(true);
    for (let x = 0; x < S; x++) {
      if (x === anchor) continue;
      if (Number.isFinite(ahead[x])) hi[x] = Math.min(hi[x], Math.floor(maxLifetime + ahead[x]));
      if (Number.isFinite(behind[x])) lo[x] = Math.max(lo[x], Math.ceil(-(maxLifetime + behind[x])));
    }
  }
  const empty = [...Array(S).keys()].some((x) => lo[x] > hi[x]);

  // ---- start-time binaries
  const y = (o: number, k: number, t: number) => `y${o}_${k}_${t < 0 ? 'm' + -t : t}`;
  const starts: { k: number; t: number; name: string }[][] = [];
  for (let o = 0; o < n; o++) {
    const list: { k: number; t: number; name: string }[] = [];
    for (const k of unitsOf(o)) {
      for (let t = lo[o]; t <= hi[o]; t++) {
        if (p.pinUnit[o] >= 0 && mod(t, N) !== p.pinSlot[o]) continue;
        const name = y(o, k, t);
        if (options.fixedOff?.has(name)) continue;
        binaries.add(name);
        list.push({ k, t, name });
      }
    }
    starts.push(list);
    const assign = new Row();
    for (const s of list) assign.add(s.name, 1);
    if (list.length === 0) assign.add('nowhere', 1); // no start fits the window: the model is infeasible
    emit(`assign${o}`, assign, '=', 1);
  }
  const nowhere = () => {
    if (continuous.has('nowhere')) return;
    bounds.push(' 0 <= nowhere <= 0');
    continuous.add('nowhere');
  };
  if (empty || starts.some((l) => l.length === 0)) nowhere();
  // one operation per unit and partition
  const cell = new Map<string, Row>();
  for (let o = 0; o < n; o++) {
    for (const s of starts[o]) {
      const key = `${s.k}_${mod(s.t, N)}`;
      if (!cell.has(key)) cell.set(key, new Row());
      cell.get(key)!.add(s.name, 1);
    }
  }
  for (const [key, row] of cell) {
    const size = classes.get(Number(key.split('_')[0]))!.length;
    if (row.terms.size > size) emit(`cap${key}`, row, '<=', size);
  }

  // outputs' node: T = N * r_out, r_out by indicator binaries (latency free), or 0 (fixed: it is the inputs' node)
  const outVals: number[] = [];
  const ro = (j: number) => `ro${j < 0 ? 'm' + -j : j}`;
  const freeOut = p.outNode !== p.inNode && p.hasOutputs;
  if (freeOut) {
    const jlo = Math.ceil(lo[p.outNode] / N);
    const jhi = Math.max(jlo, Math.floor(hi[p.outNode] / N));
    const one = new Row();
    for (let j = jlo; j <= jhi; j++) {
      if (options.fixedOff?.has(ro(j))) continue;
      outVals.push(j);
      binaries.add(ro(j));
      one.add(ro(j), 1);
    }
    if (outVals.length === 0) {
      one.add('nowhere', 1); // every value fixed off: the model is infeasible
      nowhere();
    }
    emit('outone', one, '=', 1);
  }
  /** T of a schedule node as a row. */
  const timeRow = (x: number): Row => {
    const r = new Row();
    if (x < n) for (const s of starts[x]) r.add(s.name, s.t);
    else if (x === p.outNode && freeOut) for (const j of outVals) r.add(ro(j), N * j);
    return r;
  };
  const stageRow = (x: number): Row => {
    const r = new Row();
    if (x < n) for (const s of starts[x]) r.add(s.name, p.unitStages[s.k]);
    return r;
  };
  const slotRow = (x: number): Row => {
    const r = new Row();
    if (x < n) for (const s of starts[x]) r.add(s.name, mod(s.t, N));
    return r;
  };
  // every edge constraint T_b >= T_a + base + P_a
  p.arcs.forEach((arc, i) => {
    const row = new Row().addRow(timeRow(arc.b)).addRow(timeRow(arc.a), -1);
    if (arc.stages) row.addRow(stageRow(arc.a), -1);
    if (row.terms.size === 0) return;
    emit(`prec${i}`, row, '>=', arc.base);
  });

  if (mode === 'feasibility') {
    const lp = ['\\ Pleat folding plan: feasibility only (docs/planning.md)', 'Minimize', ' obj: 0 zero', 'Subject To', ...rows, ' fz: zero >= 0', 'Bounds', ...bounds, ' 0 <= zero <= 0', ...integrality(binaries, new Set(), !!options.relax), 'End', ''].join('\n');
    return { lp, x: y, primaryWeight: 1, horizon: 0, integral: true, outValues: [], classes, binding, columns: binaries.size, rows: rowCount, starts };
  }

  // ---- the check retimes only when some folded delay is negative (docs/engine.md): z = 1 exactly then
  const z = 'zneed';
  binaries.add(z);
  const negs: string[] = [];
  const isTapEdge = (e: number) => p.role[p.edgeTo[e]] === OUT && p.boundarySlot[p.edgeTo[e]] < 0;
  const isHeldEdge = (e: number) => p.role[p.edgeFrom[e]] === IN && p.boundarySlot[p.edgeFrom[e]] < 0;
  const slotOfNode = (v: number): Row => {
    if (p.role[v] === OP) return slotRow(p.opOf[v]);
    const r = new Row();
    r.constant = Math.max(0, p.boundarySlot[v]);
    return r;
  };
  for (let e = 0; e < p.edgeFrom.length; e++) {
    if (isTapEdge(e) || isHeldEdge(e)) continue;
    const u = p.edgeFrom[e];
    const v = p.edgeTo[e];
    const w = p.edgeDelays[e];
    const f = new Row().addRow(slotOfNode(v)).addRow(slotOfNode(u), -1);
    if (p.role[u] === OP) f.addRow(stageRow(p.opOf[u]), -1);
    f.constant += N * w;
    const lowest = N * w - (p.role[u] === OP ? maxStages + N - 1 : Math.max(0, p.boundarySlot[u])) + (p.role[v] === OP ? 0 : Math.max(0, p.boundarySlot[v]));
    const highest = N * w + N - 1;
    if (lowest >= 0) continue;
    if (f.terms.size === 0) {
      if (f.constant < 0) negs.push('one');
      continue;
    }
    emit(`nz${e}`, new Row().addRow(f).add(z, -lowest), '>=', 0); // z = 0 -> not negative
    const q = `q${e}`;
    binaries.add(q);
    negs.push(q);
    emit(`nq${e}`, new Row().addRow(f).add(q, highest + 1), '<=', highest); // q = 1 -> negative
  }
  if (negs.includes('one')) bounds.push(` 1 <= ${z} <= 1`);
  else if (negs.length) {
    const some = new Row().add(z, -1);
    for (const q of negs) some.add(q, 1);
    emit('zsome', some, '>=', 0);
  } else bounds.push(` 0 <= ${z} <= 0`);
  // z = 0 -> every operation in iteration 0 (r = 0), and r(outputs) = 0
  for (let o = 0; o < n; o++) {
    const out = new Row();
    for (const s of starts[o]) if (s.t < 0 || s.t >= N) out.add(s.name, 1);
    if (out.terms.size) emit(`zr${o}`, out.add(z, -1), '<=', 0);
  }
  if (freeOut) {
    const out = new Row();
    for (const j of outVals) if (j !== 0) out.add(ro(j), 1);
    if (out.terms.size) emit('zout', out.add(z, -1), '<=', 0);
  }

  // ---- lifetimes: alive[c] >= a[c] + b[c] - 1 with a[c] = [c > tIn], b[c] >= [c <= end] per out-edge
  const regs = 'regs';
  generals.add(regs);
  const liveRows: Row[] = Array.from({ length: N }, () => new Row());
  let varCount = 0;
  let cells = 0;
  /** [c <= end] for the read of edge e at its consumer: end = T_V + N w (slotted output: N r_out + slot + N w). */
  const endIndicator = (e: number, c: number): Row => {
    const v = p.edgeTo[e];
    const w = p.edgeDelays[e];
    const r = new Row();
    if (p.role[v] === OP) {
      for (const s of starts[p.opOf[v]]) if (s.t + N * w >= c) r.add(s.name, 1);
    } else if (freeOut) {
      for (const j of outVals) if (N * j + Math.max(0, p.boundarySlot[v]) + N * w >= c) r.add(ro(j), 1);
    } else if (Math.max(0, p.boundarySlot[v]) + N * w >= c) r.constant = 1;
    return r;
  };
  const endRange = (e: number): number => {
    const v = p.edgeTo[e];
    const w = p.edgeDelays[e];
    if (p.role[v] === OP) return hi[p.opOf[v]] + N * w;
    return (freeOut ? N * Math.max(...outVals) : 0) + Math.max(0, p.boundarySlot[v]) + N * w;
  };
  // Aggregate: the sum over partitions of live(t) is the sum of the lifetimes, so N * regs >= sum of
  // lengths, each length >= end - tIn per out-edge. Implied by the cycle rows at integer points, it
  // tightens the relaxation a great deal (a fractional start smears a[c] and b[c] but not this).
  const totalLength = new Row();
  const endTime = (e: number): Row => {
    const v = p.edgeTo[e];
    const r = new Row();
    if (p.role[v] === OP) r.addRow(timeRow(p.opOf[v]));
    else if (freeOut) for (const j of outVals) r.add(ro(j), N * j);
    r.constant += (p.role[v] === OP ? 0 : Math.max(0, p.boundarySlot[v])) + N * p.edgeDelays[e];
    return r;
  };
  const lengthRows = (id: number, tIn: Row, ends: number[]) => {
    const len = `ln${id}`;
    continuous.add(len);
    bounds.push(` 0 <= ${len} <= ${maxLifetime + N}`);
    ends.forEach((e, j) => emit(`lg${id}_${j}`, new Row().add(len, 1).addRow(endTime(e), -1).addRow(tIn), '>=', 0));
    totalLength.add(len, 1);
  };
  const lifetime = (aAt: (c: number) => Row, c0: number, ends: number[], tIn?: Row) => {
    const id = varCount++;
    if (tIn) lengthRows(id, tIn, ends);
    if (mode === 'lengths') return;
    let c1 = c0;
    for (const e of ends) c1 = Math.max(c1, endRange(e));
    for (let c = c0 + 1; c <= c1; c++) {
      const a = aAt(c);
      if (a.terms.size === 0 && a.constant <= 0) continue;
      const b = `lb${id}_${c - c0}`;
      const al = `lv${id}_${c - c0}`;
      continuous.add(b);
      continuous.add(al);
      bounds.push(` 0 <= ${b} <= 1`, ` 0 <= ${al} <= 1`);
      let any = false;
      ends.forEach((e, j) => {
        const ind = endIndicator(e, c);
        if (ind.terms.size === 0 && ind.constant <= 0) return;
        any = true;
        emit(`le${id}_${c - c0}_${j}`, new Row().add(b, 1).addRow(ind, -1), '>=', 0);
      });
      if (!any) continue;
      emit(`al${id}_${c - c0}`, new Row().add(al, 1).addRow(a, -1).add(b, -1), '>=', -1);
      liveRows[mod(c, N)].add(al, 1);
      cells++;
    }
  };
  const outEdges: number[][] = p.nodeIds.map(() => []);
  for (let e = 0; e < p.edgeFrom.length; e++) if (!isTapEdge(e)) outEdges[p.edgeFrom[e]].push(e);
  for (let u = 0; u < p.nodeIds.length; u++) {
    if (p.role[u] === OUT || outEdges[u].length === 0) continue;
    if (p.role[u] === OP) {
      const o = p.opOf[u];
      const list = starts[o];
      let c0 = Infinity;
      for (const s of list) c0 = Math.min(c0, s.t + p.unitStages[s.k]);
      // a[c] = [T_U + P_U < c], exact in the start binaries
      lifetime((c) => {
        const r = new Row();
        for (const s of list) if (s.t + p.unitStages[s.k] < c) r.add(s.name, 1);
        return r;
      }, c0, outEdges[u], new Row().addRow(timeRow(o)).addRow(stageRow(o)));
    } else if (p.boundarySlot[u] >= 0) {
      const sI = p.boundarySlot[u];
      lifetime((c) => {
        const r = new Row();
        r.constant = c > sI ? 1 : 0;
        return r;
      }, sI, outEdges[u], Object.assign(new Row(), { constant: sI }));
    } else {
      // held input: one variable per edge, from the consumer's slot to T_V + N w
      for (const e of outEdges[u]) {
        const v = p.edgeTo[e];
        if (p.role[v] !== OP) continue;
        const list = starts[p.opOf[v]];
        lifetime((c) => {
          const r = new Row();
          for (const s of list) if (mod(s.t, N) < c) r.add(s.name, 1);
          return r;
        }, 0, [e], slotRow(p.opOf[v]));
      }
    }
  }
  if (mode === 'lengths') {
    const obj = totalLength.terms.size ? terms(totalLength.terms) : '0 zero';
    const lp = ['\\ Pleat folding plan: the sum of lifetimes, for the lifetime bound (docs/planning.md)', 'Minimize', ` obj: ${obj}`, 'Subject To', ...rows, ' fz: zero >= 0', 'Bounds', ...bounds, ' 0 <= zero <= 0', ...integrality(binaries, new Set(), !!options.relax), 'End', ''].join('\n');
    return { lp, x: y, primaryWeight: N, horizon: maxLifetime, integral: false, outValues: outVals, classes, binding, columns: binaries.size + continuous.size + 1, rows: rowCount, starts };
  }
  liveRows.forEach((row, t) => emit(`live${t}`, new Row().add(regs, 1).addRow(row, -1), '>=', 0));
  if (totalLength.terms.size) emit('sumlen', new Row().add(regs, N).addRow(totalLength, -1), '>=', 0);
  bounds.push(` ${Math.max(0, options.minRegisters ?? 0)} <= ${regs} <= ${maxRegisters ?? 1_000_000}`);

  // ---- multiplexer proxy: distinct producers (unit, or input node) per consumer unit and operand port
  const muxTerms: string[] = [];
  const onUnit = (o: number, k: number): Row => {
    const row = new Row();
    for (const s of starts[o]) if (s.k === k) row.add(s.name, 1);
    return row;
  };
  const seen = new Set<string>();
  const yVar = (name: string) => {
    if (!seen.has(name)) {
      seen.add(name);
      continuous.add(name);
      bounds.push(` 0 <= ${name} <= 1`);
      muxTerms.push(name);
    }
    return name;
  };
  for (let e = 0; e < p.edgeFrom.length; e++) {
    const u = p.edgeFrom[e];
    const v = p.edgeTo[e];
    if (p.role[v] !== OP) continue;
    const ov = p.opOf[v];
    const port = p.edgePort[e];
    for (const k of unitsOf(ov)) {
      if (p.role[u] === OP) {
        for (const k2 of unitsOf(p.opOf[u])) {
          const m = yVar(`m${k}_${port}_u${k2}`);
          emit(`mu${e}_${k}_${k2}`, new Row().add(m, 1).addRow(onUnit(ov, k), -1).addRow(onUnit(p.opOf[u], k2), -1), '>=', -1);
        }
      } else {
        const m = yVar(`m${k}_${port}_i${u}`);
        emit(`mi${e}_${k}`, new Row().add(m, 1).addRow(onUnit(ov, k), -1), '>=', 0);
      }
    }
  }
  const muxMax = muxTerms.length;

  // ---- latency r(out) - r(in) = r_out, shifted to be nonnegative
  const lat = new Row();
  let latRange = 0;
  if (freeOut && p.hasInputs && outVals.length) {
    const jlo = Math.min(...outVals);
    latRange = Math.max(...outVals) - jlo;
    for (const j of outVals) lat.add(ro(j), j - jlo);
  }

  cuts.forEach((cut, j) => {
    const row = new Row();
    for (let o = 0; o < n; o++) for (const s of starts[o]) if (mod(s.t, N) === cut.slot[o] && p.unitStages[s.k] === cut.stages[o]) row.add(s.name, 1);
    emit(`cut${j}`, row, '<=', n - 1);
  });

  // ---- lexicographic weights: each level's weight exceeds the whole range of the levels below
  const regMax = maxRegisters ?? Math.ceil(cells / N) + 1;
  const obj = new Row();
  let primaryWeight: number;
  if (objective === 'registers') {
    // Registers alone: an integral objective, so the solver rounds its bound up and proves the
    // count at the root whenever the relaxation is within one register; the levels below are
    // improved afterwards by swaps the engine scores (shared/planning/exact.ts, exactPlan).
    primaryWeight = 1;
    obj.add(regs, 1);
  } else if (objective === 'muxes') {
    const wReg = latRange + 1;
    primaryWeight = wReg * (regMax + 1);
    for (const m of muxTerms) obj.add(m, primaryWeight);
    obj.add(regs, wReg).addRow(lat, 1);
  } else {
    const wReg = muxMax + 1;
    primaryWeight = wReg * (regMax + 1);
    obj.addRow(lat, primaryWeight).add(regs, wReg);
    for (const m of muxTerms) obj.add(m, 1);
  }
  if (obj.terms.size === 0) obj.add(regs, 1);
  void minStagesAll;

  const lp = [
    '\\ Pleat folding plan: binding, start times (partition + N * retiming) and lifetime registers (docs/planning.md)',
    'Minimize',
    ` obj: ${terms(obj.terms)}`,
    'Subject To',
    ...rows,
    'Bounds',
    ...bounds,
    ...integrality(binaries, generals, !!options.relax),
    'End',
    '',
  ].join('\n');
  return { lp, x: y, primaryWeight, horizon: maxLifetime, integral: objective === 'registers', outValues: outVals, classes, binding, columns: binaries.size + generals.size + continuous.size, rows: rowCount, starts };
}

/** The Binaries and Generals sections, or for the relaxation the binaries' [0, 1] bounds (generals keep theirs). */
function integrality(binaries: Set<string>, generals: Set<string>, relax: boolean): string[] {
  if (relax) return [...binaries].map((b) => ` 0 <= ${b} <= 1`);
  return ['Binaries', ...chunk([...binaries]), 'Generals', ...chunk([...generals])];
}

function chunk(names: string[]): string[] {
  const out: string[] = [];
  for (let i = 0; i < names.length; i += 16) out.push(' ' + names.slice(i, i + 16).join(' '));
  return out;
}

/** Decodes the binding and partitions of a solution; null when some operation has no place. The units of a class are handed out in operation order. */
export function decodeAssignment(p: PlanProblem, model: ExactModel, values: Record<string, number>): { unitOf: Int32Array; slotOf: Int32Array } | null {
  const n = p.ops.length;
  const unitOf = new Int32Array(n).fill(-1);
  const slotOf = new Int32Array(n).fill(-1);
  const taken = new Map<string, number>();
  for (let o = 0; o < n; o++) {
    let bestV = 0.5;
    let rep = -1;
    for (const s of model.starts[o]) {
      const v = values[s.name] ?? 0;
      if (v > bestV) {
        bestV = v;
        rep = s.k;
        slotOf[o] = mod(s.t, p.N);
      }
    }
    if (rep < 0) return null;
    const members = model.classes.get(rep) ?? [rep];
    const key = `${rep}_${slotOf[o]}`;
    const i = taken.get(key) ?? 0;
    if (i >= members.length) return null;
    taken.set(key, i + 1);
    unitOf[o] = members[i];
  }
  return { unitOf, slotOf };
}

/** Least time worth handing the solver for one call (seconds); less is left unused. */
export const MIN_SOLVE_SECONDS = 0.25;

/**
 * A MIP start from a plan: the start binaries of its operations at their absolute cycles
 * (partition + N * retiming, inputs at 0) and the outputs' indicator, with the units of each
 * interchangeable group renamed in order of first use as the model's symmetry rule wants. Null
 * when some start lies outside the model's windows.
 */
export function startFromPlan(p: PlanProblem, model: ExactModel, unitOf: Int32Array, slotOf: Int32Array, retiming: Record<string, number>): Record<string, number> | null {
  const N = p.N;
  const n = p.ops.length;
  const firstOf = (role: number) => {
    for (let v = 0; v < p.nodeIds.length; v++) if (p.role[v] === role) return retiming[p.nodeIds[v]] ?? 0;
    return 0;
  };
  const rIn = firstOf(IN);
  // interchangeable units: same kind and stages, no pins; renamed in order of first use
  const pinned = new Set<number>();
  for (let o = 0; o < n; o++) if (p.pinUnit[o] >= 0) pinned.add(p.pinUnit[o]);
  const rename = new Map<number, number>();
  const nextOf = new Map<string, number>();
  for (let o = 0; o < n; o++) {
    const k = unitOf[o];
    if (pinned.has(k) || rename.has(k)) continue;
    const group = `${p.units[k].kind}\0${p.unitStages[k]}`;
    const members = (p.kindUnits.get(p.units[k].kind) ?? []).filter((u) => !pinned.has(u) && p.unitStages[u] === p.unitStages[k]);
    const i = nextOf.get(group) ?? 0;
    nextOf.set(group, i + 1);
    rename.set(k, members[i]);
  }
  const classOf = new Map<number, number>();
  for (const [rep, members] of model.classes) for (const k of members) classOf.set(k, rep);
  const start: Record<string, number> = {};
  for (let o = 0; o < n; o++) {
    const k = model.binding === 'classes' ? classOf.get(unitOf[o])! : (rename.get(unitOf[o]) ?? unitOf[o]);
    const t = slotOf[o] + N * ((retiming[p.nodeIds[p.ops[o]]] ?? 0) - rIn);
    const s = model.starts[o].find((x) => x.k === k && x.t === t);
    if (!s) return null;
    for (const x of model.starts[o]) start[x.name] = x === s ? 1 : 0;
  }
  if (p.outNode !== p.inNode && p.hasOutputs) {
    const j = firstOf(OUT) - rIn;
    if (!model.outValues.includes(j)) return null;
    for (const v of model.outValues) start[`ro${v < 0 ? 'm' + -v : v}`] = v === j ? 1 : 0;
  }
  return start;
}

/**
 * Solves the model, decodes the plan and scores it with the engine. With the registers objective
 * the lifetime bound comes first (the linear relaxation of the sum of lifetimes, an LP): when it
 * meets the known plan, that plan is proven optimal without the full model. Else the full model
 * runs from the known plan as its start. When the engine's own retiming needs more registers
 * than the model found for those partitions, the (slot, stages) assignment is cut off and the
 * model solved again (within the time limit), keeping the best plan the engine scored; the
 * model's bound stays a lower bound on every plan not yet cut off. A plan the model found is
 * then improved on the levels below registers by swaps the engine scores.
 */
export async function exactPlan(p: PlanProblem, o: ExactOptions): Promise<ExactResult> {
  const notes: string[] = [];
  const N = p.N;
  const objective = o.objective;
  const incumbentRegs = o.incumbent ? o.incumbent.registers : null;
  const cuts: { slot: Int32Array; stages: Int32Array }[] = [];
  let best: { sets: Record<string, (string | null)[]>; metrics: PlanMetrics; assignment: { unitOf: Int32Array; slotOf: Int32Array } | null; fromModel: boolean } | null = null;
  if (o.incumbent && o.incumbentSets) best = { sets: o.incumbentSets, metrics: o.incumbent, assignment: null, fromModel: false };
  let modelBound: number | null = null;
  let solvedOptimal = false;
  let answered = false;
  const maxCuts = o.maxCuts ?? 12;
  const solverName = o.solver.name ?? 'injected solver';
  const method = `${EXACT_METHOD} (${solverName})`;
  const left = () => (o.deadline - o.now()) / 1000;
  /** One solver call within the time left; null (with a note) when there is no time, it fails, or it errs. */
  const solve = async (lp: string, seconds: number, what: string, start?: Record<string, number>, duals = false): Promise<MilpSolution | null> => {
    if (o.signal?.aborted) return null;
    if (seconds < MIN_SOLVE_SECONDS) {
      notes.push(`no time left for the ${what}`);
      return null;
    }
    try {
      const t0 = o.now();
      const sol = await o.solver.solve(lp, { timeLimitSeconds: seconds, ...(start ? { start } : {}), ...(duals ? { duals } : {}) });
      notes.push(`${what}: ${sol.status} in ${((o.now() - t0) / 1000).toFixed(1)} s`);
      if (sol.status === 'error') {
        notes.push(`the solver reported an error on the ${what}${sol.message ? `: ${sol.message}` : ''}`);
        return null;
      }
      answered = true;
      return sol;
    } catch (err) {
      notes.push(`the solver failed on the ${what}: ${err instanceof Error ? err.message : String(err)}`);
      return null;
    }
  };
  const result = (extra: Partial<ExactResult> = {}): ExactResult => ({
    sets: best?.sets ?? null,
    metrics: best?.metrics ?? null,
    foundByModel: !!best?.fromModel,
    bound: null,
    provenOptimal: false,
    infeasible: false,
    solverAnswered: answered,
    method,
    notes,
    ...extra,
  });
  let horizonRegs = incumbentRegs;
  if (horizonRegs === null) {
    // No plan known: ask first whether any exists (no lifetimes, so no horizon to limit the proof).
    // windows wide enough for the shortest-path solution of any feasible placement's constraints
    let widest = 0;
    for (const arc of p.arcs) widest = Math.max(widest, Math.abs(arc.base));
    let stagesMax = 0;
    for (const x of p.unitStages) stagesMax = Math.max(stagesMax, x);
    const model = buildExactModel(p, objective, N + p.scheduleNodes * (widest + stagesMax + 1), null, [], { mode: 'feasibility' });
    const sol = await solve(model.lp, left(), 'feasibility model');
    if (sol?.status === 'infeasible') {
      notes.push('the exact model proves that no placement admits a retiming');
      return result({ infeasible: true });
    }
    const decoded = sol && Object.keys(sol.values).length ? decodeAssignment(p, model, sol.values) : null;
    if (decoded) {
      const sets = setsFromAssignment(p, decoded.unitOf, decoded.slotOf);
      const ev = evaluateDesign(designWithSets(p.design, N, p.units, sets));
      if (ev.feasible && ev.metrics) {
        best = { sets, metrics: ev.metrics, assignment: decoded, fromModel: true };
        horizonRegs = ev.metrics.registers;
      }
    }
    if (horizonRegs === null) return result();
  }
  // horizon: with the registers objective no plan as good as the known one (K registers) has a
  // lifetime above K * N, since one variable of lifetime L alone keeps ceil(L / N) registers busy;
  // other objectives search plans with at most K + 2 registers (a restriction, docs/planning.md)
  const K = horizonRegs;
  if (objective === 'registers' && best && K <= 0) return result({ bound: 0, provenOptimal: true });
  const maxLifetime = Math.max(1, objective === 'registers' ? K : K + 2) * N;
  const maxRegisters = objective !== 'registers' ? K + 2 : null;

  // The lifetime bound: registers >= ceil(sum of lifetimes / N), the sum at least the optimum of
  // the relaxation of the lengths model (an LP, far smaller than the full model). Its reduced
  // costs fix start binaries: a start whose reduced cost exceeds K * N - optimum is in no plan
  // whose lifetimes sum to at most K * N, so in no plan as good as the known one.
  let lifetimeBound: number | null = null;
  let fixedOff: Set<string> | undefined;
  if (objective === 'registers') {
    const L = buildExactModel(p, objective, maxLifetime, null, [], { mode: 'lengths', relax: true });
    const sol = await solve(L.lp, left() / 2, 'lifetime bound', undefined, true);
    if (sol && sol.status === 'optimal' && sol.objective !== null) {
      lifetimeBound = Math.max(0, Math.ceil(sol.objective / N - 1e-6));
      modelBound = lifetimeBound;
      notes.push(`lifetime bound (linear relaxation of the sum of lifetimes): ${lifetimeBound} register${lifetimeBound === 1 ? '' : 's'}`);
      if (best && K <= lifetimeBound) {
        notes.push('the known plan meets the lifetime bound, so it is optimal');
        return result({ bound: K, provenOptimal: true });
      }
      if (best && sol.reducedCosts) {
        const slack = K * N - sol.objective;
        fixedOff = new Set<string>();
        for (const [name, d] of Object.entries(sol.reducedCosts)) if ((name.startsWith('y') || name.startsWith('ro')) && d > slack + 1e-6) fixedOff.add(name);
        notes.push(`${fixedOff.size} start binaries fixed at 0 by the reduced costs of that relaxation`);
      }
    }
  }

  for (let round = 0; round <= maxCuts; round++) {
    if (o.signal?.aborted) break;
    const model = buildExactModel(p, objective, maxLifetime, maxRegisters, cuts, { minRegisters: lifetimeBound ?? undefined, fixedOff });
    if (round === 0) notes.push(`exact model: ${model.columns} columns, ${model.rows} rows, lifetime horizon ${model.horizon} cycles`);
    let start: Record<string, number> | undefined;
    // the known plan is where the search starts (HiGHS completes the columns not given)
    if (round === 0 && best) {
      const assignment = best.assignment ?? assignmentOf(p, best.sets);
      const ev = evaluateDesign(designWithSets(p.design, N, p.units, best.sets), { mux: false });
      if (assignment && ev.feasible) start = startFromPlan(p, model, assignment.unitOf, assignment.slotOf, ev.analysis.retiming.values) ?? undefined;
    }
    const sol = await solve(model.lp, left(), 'exact model', start);
    if (!sol) break;
    if (sol.status === 'infeasible') {
      // round 0: cannot be, the incumbent is a plan within the horizon; later: every class left is cut off
      if (round === 0) notes.push('the exact model found no plan within the horizon set by the known plan');
      else solvedOptimal = objective === 'registers' && best !== null;
      break;
    }
    // registers alone are integral: a bound b proves ceil(b); weighted levels: floor(b / weight)
    const level = (x: number) => (model.integral ? Math.ceil(x - 1e-6) : Math.floor(x / model.primaryWeight + 1e-6));
    const fromBound = sol.bound !== null ? level(sol.bound) : null;
    const objValue = sol.objective !== null ? Math.floor(sol.objective / model.primaryWeight + 1e-6) : null;
    const decoded = Object.keys(sol.values).length ? decodeAssignment(p, model, sol.values) : null;
    if (!decoded) {
      notes.push(`the solver stopped (${sol.status}) without a plan`);
      if (objective === 'registers' && fromBound !== null) modelBound = Math.max(modelBound ?? 0, fromBound);
      break;
    }
    const sets = setsFromAssignment(p, decoded.unitOf, decoded.slotOf);
    const ev = evaluateDesign(designWithSets(p.design, N, p.units, sets));
    if (!ev.feasible || !ev.metrics) {
      // cannot happen: every edge constraint of the model is the engine's feasibility condition
      notes.push('a decoded plan failed the engine check; it is cut off');
    } else if (!best || compareMetrics(ev.metrics, best.metrics, objective) < 0) {
      best = { sets, metrics: ev.metrics, assignment: decoded, fromModel: true };
    }
    const optimalSolve = sol.status === 'optimal';
    if (objective === 'registers') {
      const b = optimalSolve ? objValue : fromBound;
      if (b !== null) modelBound = Math.max(modelBound ?? 0, b);
    }
    if (!optimalSolve) {
      notes.push(`the solver stopped at its time limit (${sol.status})`);
      break;
    }
    // proven when the engine agrees with the model on the primary objective
    if (objective !== 'registers' || (best && objValue !== null && best.metrics.registers <= objValue)) {
      solvedOptimal = objective === 'registers';
      break;
    }
    const stages = new Int32Array(p.ops.length);
    for (let q = 0; q < p.ops.length; q++) stages[q] = p.unitStages[decoded.unitOf[q]];
    cuts.push({ slot: decoded.slotOf, stages });
    notes.push(`the engine's retiming needs ${ev.metrics?.registers} registers where the model found ${objValue}; that assignment is cut off and the model solved again`);
  }
  // A plan of the model has its registers minimised, not what comes after: swaps scored by the
  // engine improve the lower levels (never the registers' count upwards), within a fifth of the time left.
  if (best?.fromModel && best.assignment && p.ops.length <= 300 && !o.signal?.aborted) {
    const until = o.now() + Math.max(0, o.deadline - o.now()) / 5;
    const r = engineSearch(p, best.assignment, best.metrics, objective, until, o.now, o.signal);
    if (compareMetrics(r.metrics, best.metrics, objective) < 0) {
      best = { sets: setsFromAssignment(p, r.assignment.unitOf, r.assignment.slotOf), metrics: r.metrics, assignment: r.assignment, fromModel: true };
      notes.push(`the model's plan improved by ${r.evaluations} swaps and moves scored by the engine`);
    }
  }
  let bound = objective === 'registers' ? modelBound : null;
  if (bound !== null && best) bound = Math.min(bound, best.metrics.registers);
  if (bound !== null && incumbentRegs !== null) bound = Math.min(bound, incumbentRegs);
  const provenOptimal = !!best && objective === 'registers' && (solvedOptimal || (bound !== null && primary(best.metrics, objective) <= bound));
  if (provenOptimal && best) bound = best.metrics.registers;
  return result({ bound, provenOptimal });
}

/** Unit index and slot of every operation in complete sets, or null when some operation is missing. */
function assignmentOf(p: PlanProblem, sets: Record<string, (string | null)[]>): { unitOf: Int32Array; slotOf: Int32Array } | null {
  const n = p.ops.length;
  const unitOf = new Int32Array(n).fill(-1);
  const slotOf = new Int32Array(n).fill(-1);
  for (const [unit, list] of Object.entries(sets)) {
    const k = p.unitIndex.get(unit);
    if (k === undefined) continue;
    list.forEach((id, t) => {
      if (id === null) return;
      const v = p.nodeIndex.get(id);
      if (v === undefined || p.opOf[v] < 0) return;
      unitOf[p.opOf[v]] = k;
      slotOf[p.opOf[v]] = t;
    });
  }
  for (let q = 0; q < n; q++) if (unitOf[q] < 0) return null;
  return { unitOf, slotOf };
}
