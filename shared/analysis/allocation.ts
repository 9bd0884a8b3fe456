// Method: forward-backward register allocation (Parhi 1999, ch. 6) in the lifetime minimum.
// Convention: simulated until the state at an iteration boundary repeats; one period N is shown.
import type { Allocation, Lifetime, LifetimeChart } from '../types';

export const METHOD_FORWARD_BACKWARD = 'forward-backward';
export const METHOD_RANKED_PERIOD =
  'ranked by production time (fallback): forward-backward settles into a steady state that repeats only every several iterations, so during each partition the live values sit youngest first in registers 0, 1, ...';
export const METHOD_RANKED_BUDGET =
  'ranked by production time (fallback): forward-backward did not settle within its work budget, so during each partition the live values sit youngest first in registers 0, 1, ...';

/**
 * Register-cycles one forward-backward attempt may simulate. From empty registers the
 * pattern needs about K cycles to settle, so large register files fall back (about K^2 work).
 */
const WORK_BUDGET = 4_000_000;

type Move = Allocation['moves'][number];

/**
 * The ways forward-backward is run, in order; the first whose steady state repeats every
 * iteration gives the table. The rules stay the same, only two choices the method leaves open
 * change: which of several values produced in the same cycle takes the lower register, and
 * which register state the simulation starts from (empty, or the steady-state live values
 * packed youngest or oldest first).
 */
const ATTEMPTS: { start: 'empty' | 'youngest-first' | 'oldest-first'; longestFirst: boolean }[] = [
  { start: 'empty', longestFirst: true },
  { start: 'empty', longestFirst: false },
  { start: 'youngest-first', longestFirst: true },
  { start: 'oldest-first', longestFirst: true },
];

/** Name of an instance during a cycle `elapsed` cycles after it was produced (elapsed >= 1). */
export function instanceName(name: string, elapsed: number, N: number): string {
  const j = Math.floor((elapsed - 1) / N);
  return j === 0 ? name : `${name}@${j}`;
}

/**
 * Allocates the variables of a lifetime chart to `registers` registers (the lifetime minimum).
 * Each cycle every value still alive moves one register forward; new values enter the first
 * free registers at the end of their production cycle; then a value in the last register that
 * is still alive moves back to the first register free in the next cycle.
 */
export function allocateRegisters(chart: LifetimeChart, registers: number): Allocation {
  const N = chart.factor;
  const K = registers;
  const live = chart.variables.filter((x) => x.tOut > x.tIn);
  if (K === 0 || live.length === 0) {
    return { registers: K, factor: N, method: METHOD_FORWARD_BACKWARD, cells: emptyRows(N, K), moves: [] };
  }
  // Moving every production time by the same whole number of iterations changes nothing but the
  // numbering of cycles (registers are empty until the first production), and deep pipelines
  // (a unit of 10^5 stages) would otherwise be simulated through every empty cycle before it.
  let minTIn = Infinity;
  for (const x of live) if (x.tIn < minTIn) minTIn = x.tIn;
  const shift = Math.floor(minTIn / N) * N;
  const vars = shift === 0 ? live : live.map((x) => ({ ...x, tIn: x.tIn - shift, tOut: x.tOut - shift }));
  let method = METHOD_RANKED_PERIOD;
  for (const attempt of ATTEMPTS) {
    const sim = new ForwardBackward(vars, N, K, attempt.longestFirst);
    const steady = sim.findSteadyState(attempt.start, WORK_BUDGET);
    if (steady.kind === 'periodic') {
      return { registers: K, factor: N, method: METHOD_FORWARD_BACKWARD, ...sim.recordWindow(steady.snapshot) };
    }
    if (steady.kind === 'transient') continue; // the packed starts begin in the steady state
    if (steady.kind === 'budget') {
      // Another start would need as long: stop here.
      method = METHOD_RANKED_BUDGET;
      break;
    }
  }
  return { registers: K, factor: N, method, ...rankedAllocation(vars, N, K) };
}

function emptyRows(N: number, K: number): (string | null)[][] {
  const rows: (string | null)[][] = [];
  for (let t = 0; t < N; t++) rows.push(new Array<string | null>(K).fill(null));
  return rows;
}

/** Register state at an iteration boundary: variable (-1 free) and age in cycles per register. */
interface Snapshot {
  iteration: number;
  vars: Int32Array;
  ages: Float64Array;
}

type SteadyState = { kind: 'periodic'; snapshot: Snapshot } | { kind: 'long-period' } | { kind: 'budget' } | { kind: 'transient' };

class ForwardBackward {
  private readonly length: Float64Array;
  private readonly tIn: Float64Array;
  /** Variables produced at the end of a cycle c with c mod N = t, in placement order. */
  private readonly births: Int32Array[];
  private readonly maxTIn: number;
  // Register file during the current cycle: variable index (-1 free) and production cycle.
  private regVar: Int32Array;
  private regProd: Float64Array;
  private nextVar: Int32Array;
  private nextProd: Float64Array;
  private cycle = 0;

  constructor(
    private readonly vars: readonly Lifetime[],
    private readonly N: number,
    private readonly K: number,
    longestFirst: boolean,
  ) {
    const V = vars.length;
    this.length = new Float64Array(V);
    this.tIn = new Float64Array(V);
    let maxTIn = 0;
    const byPartition: number[][] = Array.from({ length: N }, () => []);
    for (let x = 0; x < V; x++) {
      this.length[x] = vars[x].tOut - vars[x].tIn;
      this.tIn[x] = vars[x].tIn;
      if (vars[x].tIn > maxTIn) maxTIn = vars[x].tIn;
      byPartition[vars[x].tIn % N].push(x);
    }
    this.maxTIn = maxTIn;
    const sign = longestFirst ? 1 : -1;
    const len = this.length;
    this.births = byPartition.map((list) => Int32Array.from(list.sort((a, b) => sign * (len[b] - len[a]) || a - b)));
    this.regVar = new Int32Array(K).fill(-1);
    this.regProd = new Float64Array(K);
    this.nextVar = new Int32Array(K);
    this.nextProd = new Float64Array(K);
  }

  /** Advances from cycle c to c + 1; collects the transfers at the end of c when asked. */
  private step(moves: Move[] | null): void {
    const { K, N } = this;
    const c = this.cycle;
    const nv = this.nextVar;
    const np = this.nextProd;
    nv.fill(-1);
    const rv = this.regVar;
    const rp = this.regProd;
    const len = this.length;
    for (let k = 0; k < K - 1; k++) {
      const x = rv[k];
      if (x >= 0 && c + 1 <= rp[k] + len[x]) {
        nv[k + 1] = x;
        np[k + 1] = rp[k];
        if (moves) moves.push(this.move(c, x, rp[k], k, k + 1));
      }
    }
    let free = 0;
    const list = this.births[c % N];
    for (let i = 0; i < list.length; i++) {
      const x = list[i];
      if (c < this.tIn[x]) continue; // before its first iteration: nothing produced yet
      while (free < K && nv[free] >= 0) free++;
      if (free === K) throw new Error('allocation: more live values than registers');
      nv[free] = x;
      np[free] = c;
      if (moves) moves.push(this.move(c, x, c, 'unit', free));
    }
    const last = rv[K - 1];
    if (last >= 0 && c + 1 <= rp[K - 1] + len[last]) {
      while (free < K && nv[free] >= 0) free++;
      if (free === K) throw new Error('allocation: more live values than registers');
      nv[free] = last;
      np[free] = rp[K - 1];
      if (moves) moves.push(this.move(c, last, rp[K - 1], K - 1, free));
    }
    this.nextVar = rv;
    this.nextProd = rp;
    this.regVar = nv;
    this.regProd = np;
    this.cycle = c + 1;
  }

  private move(c: number, x: number, produced: number, from: number | 'unit', to: number): Move {
    // Named as the value appears in register `to` during the next cycle.
    return { cycle: c % this.N, variable: instanceName(this.vars[x].variable, c + 1 - produced, this.N), from, to };
  }

  /** Packs the instances live at the current cycle (steady state) youngest or oldest first. */
  private packSteadyState(youngestFirst: boolean): void {
    const { N } = this;
    const c = this.cycle;
    const live: { x: number; e: number }[] = [];
    for (let x = 0; x < this.vars.length; x++) {
      // elapsed e in 1..L with (tIn + e) = c (mod N)
      for (let e = mod(c - this.tIn[x] - 1, N) + 1; e <= this.length[x]; e += N) live.push({ x, e });
    }
    live.sort((p, q) => (youngestFirst ? p.e - q.e : q.e - p.e) || p.x - q.x);
    this.regVar.fill(-1);
    live.forEach((item, k) => {
      this.regVar[k] = item.x;
      this.regProd[k] = c - item.e;
    });
  }

  /**
   * Runs the simulation and compares the register state at iteration boundaries from the
   * point where every variable is produced every iteration. A state seen exactly one iteration
   * earlier means a steady state of period N.
   */
  findSteadyState(start: 'empty' | 'youngest-first' | 'oldest-first', budget: number): SteadyState {
    const { N, K } = this;
    const firstBoundary = Math.ceil(this.maxTIn / N);
    if (start !== 'empty') {
      this.cycle = firstBoundary * N;
      this.packSteadyState(start === 'youngest-first');
    }
    // A value travels at most K registers before it goes back, and lives at most maxLength
    // cycles: a steady state of period N shows up within a few such spans, or not at all.
    let maxLength = 0;
    for (let x = 0; x < this.length.length; x++) maxLength = Math.max(maxLength, this.length[x]);
    const settle = 8 * (K + Math.ceil(maxLength / N)) + 64;
    const perIteration = N * K + this.vars.length;
    const lastIteration = firstBoundary + Math.min(settle, Math.max(4, Math.floor(budget / perIteration)));
    // From empty registers the start-up alone (until every variable is produced) may cost more
    // than the budget when production times are far apart: leave that start to the packed ones.
    if (start === 'empty' && firstBoundary * perIteration > budget) return { kind: 'transient' };
    const ring = new Ring(this.regVar, this.regProd, this.length, this.cycle, maxLength);
    const seen = new Map<number, Snapshot[]>();
    for (let l = this.cycle / N; l <= lastIteration; l++) {
      if (l >= firstBoundary) {
        const snap = this.ringSnapshot(ring, l);
        const h = hashState(snap);
        const same = seen.get(h)?.find((s) => sameState(s, snap));
        if (same) return l - same.iteration === 1 ? { kind: 'periodic', snapshot: same } : { kind: 'long-period' };
        const list = seen.get(h);
        if (list) list.push(snap);
        else seen.set(h, [snap]);
      }
      for (let t = 0; t < N; t++) this.ringStep(ring);
    }
    return { kind: 'budget' };
  }

  /**
   * The same cycle as `step`, without transfers, on a register file kept as a ring: register k
   * sits in slot (base + k) mod K, so moving every value one register forward is base - 1. A
   * value leaves its slot by a list of deaths per cycle, and free slots are found in a bitmap a
   * word at a time, so a cycle costs its births and deaths plus K / 32 instead of K.
   */
  private ringStep(ring: Ring): void {
    const { K, N } = this;
    const c = this.cycle;
    const d = c + 1; // cycle the registers are filled for
    const len = this.length;
    // Register K - 1 during c is register 0 during c + 1, which nothing moves into.
    const base = ring.base === 0 ? K - 1 : ring.base - 1;
    ring.base = base;
    const held = ring.isHeld(base);
    const last = ring.vars[base];
    const lastProd = ring.prod[base];
    if (held) ring.release(base);
    ring.releaseDeaths(d);
    let free = 0;
    const list = this.births[c % N];
    for (let i = 0; i < list.length; i++) {
      const x = list[i];
      if (c < this.tIn[x]) continue; // before its first iteration: nothing produced yet
      free = ring.firstFree(free);
      if (free === K) throw new Error('allocation: more live values than registers');
      ring.hold(free, x, c, c + len[x] + 1);
      free++;
    }
    if (held && d <= lastProd + len[last]) {
      free = ring.firstFree(free);
      if (free === K) throw new Error('allocation: more live values than registers');
      ring.hold(free, last, lastProd, lastProd + len[last] + 1);
    }
    this.cycle = d;
  }

  /** The state of the ring in the form `snapshot` gives (free registers -1 with age 0). */
  private ringSnapshot(ring: Ring, iteration: number): Snapshot {
    const { K } = this;
    const c = this.cycle;
    const vars = new Int32Array(K);
    const ages = new Float64Array(K);
    const len = this.length;
    let slot = ring.base;
    for (let k = 0; k < K; k++) {
      const x = ring.vars[slot];
      if (x >= 0 && c <= ring.prod[slot] + len[x]) {
        vars[k] = x;
        ages[k] = c - ring.prod[slot];
      } else vars[k] = -1;
      slot = slot === K - 1 ? 0 : slot + 1;
    }
    return { iteration, vars, ages };
  }

  /** Cells and transfers of the iteration that starts in the given state. */
  recordWindow(snap: Snapshot): Pick<Allocation, 'cells' | 'moves'> {
    const { N, K } = this;
    this.cycle = snap.iteration * N;
    for (let k = 0; k < K; k++) {
      this.regVar[k] = snap.vars[k];
      this.regProd[k] = this.cycle - snap.ages[k];
    }
    const cells: (string | null)[][] = [];
    const moves: Move[] = [];
    for (let t = 0; t < N; t++) {
      const row = new Array<string | null>(K).fill(null);
      for (let k = 0; k < K; k++) {
        const x = this.regVar[k];
        if (x >= 0) row[k] = instanceName(this.vars[x].variable, this.cycle - this.regProd[k], N);
      }
      cells.push(row);
      this.step(moves);
    }
    return { cells, moves };
  }
}

/**
 * Register file as a ring (see ForwardBackward.ringStep): variable and production cycle per
 * slot, a bitmap of the slots holding a live value, and per slot a place in a doubly linked
 * list of the values that die in the same cycle (buckets by cycle mod maxLength + 2).
 */
class Ring {
  readonly vars: Int32Array;
  readonly prod: Float64Array;
  base = 0;
  private readonly K: number;
  private readonly held: Uint32Array;
  private readonly head: Int32Array;
  private readonly next: Int32Array;
  private readonly prev: Int32Array;
  private readonly slotBucket: Int32Array;

  constructor(vars: Int32Array, prod: Float64Array, len: Float64Array, cycle: number, maxLength: number) {
    const K = vars.length;
    this.K = K;
    this.vars = new Int32Array(K).fill(-1);
    this.prod = new Float64Array(K);
    this.held = new Uint32Array((K + 31) >>> 5);
    this.head = new Int32Array(maxLength + 2).fill(-1);
    this.next = new Int32Array(K);
    this.prev = new Int32Array(K);
    this.slotBucket = new Int32Array(K);
    for (let k = 0; k < K; k++) {
      const x = vars[k];
      if (x >= 0 && cycle <= prod[k] + len[x]) this.place(k, x, prod[k], prod[k] + len[x] + 1);
    }
  }

  isHeld(slot: number): boolean {
    return (this.held[slot >>> 5] & (1 << (slot & 31))) !== 0;
  }

  /** Puts a value into the register at logical index k (a free one). */
  hold(k: number, x: number, produced: number, deathCycle: number): void {
    let slot = this.base + k;
    if (slot >= this.K) slot -= this.K;
    this.place(slot, x, produced, deathCycle);
  }

  private place(slot: number, x: number, produced: number, deathCycle: number): void {
    this.vars[slot] = x;
    this.prod[slot] = produced;
    this.held[slot >>> 5] |= 1 << (slot & 31);
    const b = deathCycle % this.head.length;
    this.slotBucket[slot] = b;
    const h = this.head[b];
    this.next[slot] = h;
    this.prev[slot] = -1;
    if (h >= 0) this.prev[h] = slot;
    this.head[b] = slot;
  }

  /** Frees a slot that holds a value. */
  release(slot: number): void {
    this.held[slot >>> 5] &= ~(1 << (slot & 31));
    this.vars[slot] = -1;
    const n = this.next[slot];
    const p = this.prev[slot];
    if (p >= 0) this.next[p] = n;
    else this.head[this.slotBucket[slot]] = n;
    if (n >= 0) this.prev[n] = p;
  }

  /** Frees the slots whose value is no longer alive during `cycle`. */
  releaseDeaths(cycle: number): void {
    const b = cycle % this.head.length;
    for (let slot = this.head[b]; slot >= 0; slot = this.next[slot]) {
      this.held[slot >>> 5] &= ~(1 << (slot & 31));
      this.vars[slot] = -1;
    }
    this.head[b] = -1;
  }

  /** Logical index of the first free register at or after logical index k; K when none. */
  firstFree(k: number): number {
    const K = this.K;
    if (k >= K) return K;
    let p = this.base + k;
    if (p >= K) p -= K;
    // Physical slots p..K-1 (logical k..), then 0..base-1 (after the wrap).
    const firstEnd = p >= this.base ? K : this.base;
    const found = this.zeroBit(p, firstEnd);
    if (found >= 0) return found >= this.base ? found - this.base : found + K - this.base;
    if (p < this.base) return K;
    const wrapped = this.zeroBit(0, this.base);
    return wrapped >= 0 ? wrapped + K - this.base : K;
  }

  /** First slot in from..to-1 whose bit is clear; -1 when none. */
  private zeroBit(from: number, to: number): number {
    if (from >= to) return -1;
    let w = from >>> 5;
    let bits = ~this.held[w] & (~0 << (from & 31));
    const lastWord = (to - 1) >>> 5;
    while (bits === 0) {
      if (++w > lastWord) return -1;
      bits = ~this.held[w];
    }
    const slot = (w << 5) + (31 - Math.clz32(bits & -bits));
    return slot < to ? slot : -1;
  }
}

function mod(a: number, n: number): number {
  return ((a % n) + n) % n;
}

function hashState(s: Snapshot): number {
  let h = 0x811c9dc5;
  for (let k = 0; k < s.vars.length; k++) {
    h = Math.imul(h ^ s.vars[k], 16777619);
    h = Math.imul(h ^ s.ages[k], 16777619);
  }
  return h;
}

function sameState(a: Snapshot, b: Snapshot): boolean {
  for (let k = 0; k < a.vars.length; k++) if (a.vars[k] !== b.vars[k] || a.ages[k] !== b.ages[k]) return false;
  return true;
}

/**
 * An allocation that is N-periodic by construction: during each partition the live instances,
 * youngest first (ties in variable order), occupy registers 0, 1, ... . It never needs more
 * registers than the largest live count, i.e. exactly the lifetime minimum. From one partition
 * to the next the survivors keep their order behind the newly produced values, so each move is
 * found by counting, without lookups.
 */
export function rankedAllocation(vars: readonly Lifetime[], N: number, K: number): Pick<Allocation, 'cells' | 'moves'> {
  const V = vars.length;
  const tIn = new Float64Array(V);
  const life = new Float64Array(V);
  for (let x = 0; x < V; x++) {
    tIn[x] = vars[x].tIn;
    life[x] = vars[x].tOut - vars[x].tIn;
  }
  // Instances (variable x, elapsed e) live during each partition, keyed e * V + x so that a
  // numeric sort orders them youngest first; there are sum of lifetimes <= N*K of them.
  const count = new Int32Array(N + 1);
  for (let x = 0; x < V; x++) {
    for (let e = 1; e <= life[x]; e++) count[(tIn[x] + e) % N]++;
  }
  const start = new Int32Array(N + 1);
  for (let t = 0; t < N; t++) start[t + 1] = start[t] + count[t];
  const keys = new Float64Array(start[N]);
  const fill = start.slice(0, N);
  for (let x = 0; x < V; x++) {
    for (let e = 1; e <= life[x]; e++) keys[fill[(tIn[x] + e) % N]++] = e * V + x;
  }
  for (let t = 0; t < N; t++) keys.subarray(start[t], start[t + 1]).sort();

  const cells: (string | null)[][] = [];
  for (let t = 0; t < N; t++) {
    const row = new Array<string | null>(K).fill(null);
    for (let k = start[t]; k < start[t + 1]; k++) {
      const x = keys[k] % V;
      row[k - start[t]] = instanceName(vars[x].variable, (keys[k] - x) / V, N);
    }
    cells.push(row);
  }
  const moves: Move[] = [];
  for (let t = 0; t < N; t++) {
    const next = (t + 1) % N;
    // Every move lands where the next partition's row has that instance (the survivors keep
    // their order behind the values produced at the end of t), so its name is that cell's.
    const arriving = cells[next];
    // Values produced at the end of partition t are the youngest of the next partition.
    let born = 0;
    for (let k = start[next]; k < start[next + 1] && keys[k] < 2 * V; k++) {
      moves.push({ cycle: t, variable: arriving[born]!, from: 'unit', to: born });
      born++;
    }
    let kept = 0;
    for (let k = start[t]; k < start[t + 1]; k++) {
      const x = keys[k] % V;
      const e = (keys[k] - x) / V;
      if (e + 1 > life[x]) continue; // last used in partition t
      const to = born + kept++;
      moves.push({ cycle: t, variable: arriving[to]!, from: k - start[t], to });
    }
  }
  return { cells, moves };
}
