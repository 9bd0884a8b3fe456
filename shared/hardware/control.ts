// Control tables of a folded datapath (Parhi, "VLSI Digital Signal Processing Systems", ch. 6:
// folding transformation, with registers placed by forward-backward allocation). Convention: a
// register loads at the end of a partition and holds the value during the following cycles.
import { buildGraph, INPUT, NO_SLOT, OPERATION, OUTPUT, type IndexedGraph } from '../analysis/graph';
import { foldedDelays } from '../analysis/foldedDelay';
import { lifetimeVariables } from '../analysis/registers';
import type { FoldedDatapath } from '../analysis/analyze';
import { nodeOp, operandOrder } from './reference';
import type {
  Allocation,
  Analysis,
  ControlTables,
  Design,
  Lifetime,
  MuxTable,
  OutputControl,
  RegisterTable,
  SignalSource,
  UnitControl,
  UnitSlot,
} from '../types';
import { floorDiv } from '../analysis/constraints';

function mod(a: number, n: number): number {
  return ((a % n) + n) % n;
}

/**
 * A variable instance, keyed `index:age` inside this module: `age` = (iteration of the frame) -
 * (iteration that produced it). Tables show it as the allocation table does (displayKey).
 */
function instanceKey(variable: number, age: number): string {
  return `${variable}:${age}`;
}
function splitKey(key: string): [number, number] {
  const c = key.indexOf(':');
  return [Number(key.slice(0, c)), Number(key.slice(c + 1))];
}
/**
 * How an instance reads in the tables during partition t, as the allocation table names it:
 * `name@j` when it was produced `elapsed` cycles ago, j = floor((elapsed - 1) / N), `name` for j = 0.
 */
function displayKey(vars: Variable[], key: string, t: number, N: number): string {
  const [v, age] = splitKey(key);
  const elapsed = t + age * N - vars[v].tIn;
  const j = Math.floor((elapsed - 1) / N);
  return j === 0 ? vars[v].variable : `${vars[v].variable}@${j}`;
}

export function sourceKey(s: SignalSource): string {
  switch (s.kind) {
    case 'unit':
      return `unit:${s.unit}`;
    case 'input':
      return `input:${s.node}`;
    case 'register':
      return `reg:${s.register}`;
    case 'zero':
      return 'zero';
  }
}

/** How a source reads in a table: `MUL1`, `x (input)`, `R3`, `0`. */
export function sourceLabel(s: SignalSource): string {
  switch (s.kind) {
    case 'unit':
      return `${s.unit} result`;
    case 'input':
      return `input ${s.node}`;
    case 'register':
      return `R${s.register}`;
    case 'zero':
      return '0';
  }
}

interface Variable extends Lifetime {
  source: SignalSource;
}

/** Which register holds which instance in each partition, from whatever allocation is used. */
type Placement = Map<string, number>[];

/** Instances live in partition t (frame iteration 0): produced before t, last read at or after t. */
function liveInstances(N: number, vars: Variable[]): string[][] {
  const live: string[][] = [];
  for (let t = 0; t < N; t++) {
    const here: string[] = [];
    vars.forEach((v, i) => {
      if (v.tOut <= v.tIn) return;
      const lo = Math.ceil((v.tIn - t + 1) / N);
      const hi = floorDiv(v.tOut - t, N);
      for (let a = lo; a <= hi; a++) here.push(instanceKey(i, a));
    });
    live.push(here);
  }
  return live;
}

/** Instance at partition t+1 (or, after the last partition, at partition 0 one iteration later). */
function nextKey(N: number, t: number, key: string): string {
  if (t < N - 1) return key;
  const [v, age] = splitKey(key);
  return instanceKey(v, age + 1);
}

/**
 * The live instances of every partition as numbers `variable * stride + age - minAge`, ascending
 * (the order of liveInstances); `stride` leaves room for age + 1, so the instance one iteration
 * later never collides with the next variable's.
 */
interface LiveNumbers {
  live: Float64Array[];
  stride: number;
  minAge: number;
}

function liveNumbers(N: number, vars: Variable[]): LiveNumbers {
  let minAge = Infinity;
  let maxAge = -Infinity;
  for (const v of vars) {
    if (v.tOut <= v.tIn) continue;
    minAge = Math.min(minAge, Math.ceil((v.tIn - (N - 1) + 1) / N));
    maxAge = Math.max(maxAge, floorDiv(v.tOut, N));
  }
  if (!Number.isFinite(minAge)) minAge = maxAge = 0;
  const stride = maxAge - minAge + 2;
  const live: Float64Array[] = [];
  for (let t = 0; t < N; t++) {
    let count = 0;
    for (const v of vars) if (v.tOut > v.tIn) count += Math.max(0, floorDiv(v.tOut - t, N) - Math.ceil((v.tIn - t + 1) / N) + 1);
    const here = new Float64Array(count);
    let at = 0;
    vars.forEach((v, i) => {
      if (v.tOut <= v.tIn) return;
      const lo = Math.ceil((v.tIn - t + 1) / N);
      const hi = floorDiv(v.tOut - t, N);
      for (let a = lo; a <= hi; a++) here[at++] = i * stride + a - minAge;
    });
    live.push(here);
  }
  return { live, stride, minAge };
}

/** Pleat's own allocation on numbered instances: per partition the instances (ascending) and their registers. */
interface NumberedPlacement {
  keys: Float64Array[];
  regs: Int32Array[];
  registers: number;
}

/**
 * Pleat's own allocation, used when the analysis has none it can read: the live instances of
 * each partition in the fewest registers (the lifetime minimum), each instance kept in its
 * register while it lives; instances move only where the partitions wrap around. Both lists are
 * ascending, so the register an instance had in the partition before is found by a merge.
 */
function numberedPlacement(N: number, ln: LiveNumbers): NumberedPlacement {
  const { live } = ln;
  const registers = live.reduce((m, l) => Math.max(m, l.length), 0);
  const used = new Int32Array(registers);
  let stamp = 0;
  const keys: Float64Array[] = live;
  let regs: Int32Array[] = [];
  let carryKeys: ArrayLike<number> = new Float64Array(0);
  let carryRegs: ArrayLike<number> = new Int32Array(0);
  // Two passes: the second starts partition 0 from where the first left the last partition.
  for (let pass = 0; pass < 2; pass++) {
    regs = [];
    for (let t = 0; t < N; t++) {
      const here = live[t];
      const r = new Int32Array(here.length).fill(-1);
      stamp++;
      let j = 0;
      for (let i = 0; i < here.length; i++) {
        const k = here[i];
        while (j < carryKeys.length && carryKeys[j] < k) j++;
        if (j < carryKeys.length && carryKeys[j] === k && used[carryRegs[j]] !== stamp) {
          r[i] = carryRegs[j];
          used[r[i]] = stamp;
        }
      }
      let next = 0;
      for (let i = 0; i < here.length; i++) {
        if (r[i] >= 0) continue;
        while (used[next] === stamp) next++;
        r[i] = next;
        used[next] = stamp;
      }
      regs.push(r);
      // the instance at partition t + 1, or after the last partition one iteration older at partition 0
      carryKeys = t < N - 1 ? here : here.map((k) => k + 1);
      carryRegs = r;
    }
  }
  return { keys, regs, registers };
}

/** The register of a numbered instance in partition t (binary search), or -1. */
function registerOf(p: NumberedPlacement, t: number, key: number): number {
  const ks = p.keys[t];
  let lo = 0;
  let hi = ks.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    if (ks[mid] === key) return p.regs[t][mid];
    if (ks[mid] < key) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/** The same allocation keyed as the tables key instances (`index:age`). */
function ownPlacement(N: number, vars: Variable[]): { placement: Placement; registers: number } {
  const ln = liveNumbers(N, vars);
  const np = numberedPlacement(N, ln);
  const placement: Placement = np.keys.map((ks, t) => {
    const m = new Map<string, number>();
    ks.forEach((k, i) => m.set(instanceKey(Math.floor(k / ln.stride), (k % ln.stride) + ln.minAge), np.regs[t][i]));
    return m;
  });
  return { placement, registers: np.registers };
}

/**
 * Reads the analysis' allocation table: cells[t][k] names the instance in register k during
 * partition t as `name` or `name@j`, j = floor((cycles since production - 1) / N) (the naming of
 * shared/analysis/allocation.ts). Accepted only if every partition holds exactly the live instances;
 * otherwise the reason is returned.
 */
function analysisPlacement(alloc: Allocation, N: number, live: string[][], vars: Variable[]): Placement | string {
  if (alloc.factor !== N) return `its factor ${alloc.factor} differs from the design's ${N}`;
  if (alloc.cells.length !== N) return `it has ${alloc.cells.length} rows for ${N} partitions`;
  const index = new Map(vars.map((v, i) => [v.variable, i]));
  const parse = (cell: string, t: number): string | null => {
    let v = index.get(cell);
    let j = 0;
    if (v === undefined) {
      const at = cell.lastIndexOf('@');
      if (at < 0 || !/^\d+$/.test(cell.slice(at + 1))) return null;
      v = index.get(cell.slice(0, at));
      j = Number(cell.slice(at + 1));
      if (v === undefined) return null;
    }
    // Cycles since production: the one value in jN+1 .. jN+N that lands in partition t.
    const elapsed = (mod(t - vars[v].tIn - 1, N) + 1) + j * N;
    return instanceKey(v, (vars[v].tIn + elapsed - t) / N);
  };
  const placement: Placement = [];
  for (let t = 0; t < N; t++) {
    const m = new Map<string, number>();
    const row = alloc.cells[t] ?? [];
    for (let k = 0; k < row.length; k++) {
      const cell = row[k];
      if (cell === null || cell === undefined) continue;
      const key = parse(cell, t);
      if (key === null) return `partition ${t} names ${cell}, which is no variable of lifetime analysis`;
      if (m.has(key)) return `partition ${t} holds ${cell} twice`;
      m.set(key, k);
    }
    const want = new Set(live[t]);
    if (m.size !== want.size) return `partition ${t} holds ${m.size} instances where lifetime analysis finds ${want.size} live`;
    for (const k of m.keys()) if (!want.has(k)) return `partition ${t} holds ${displayKey(vars, k, t, N)}, which is not live then`;
    placement.push(m);
  }
  return placement;
}

/** An edge of the datapath: where its value comes from in the cycle its consumer reads it. */
interface EdgeRoute {
  /** The signal read, or null for a tap (no read at a partition). */
  source: SignalSource | null;
  variable: string | null;
}

export interface ControlResult {
  control: ControlTables | null;
  /** Why there are no tables, when control is null. */
  reason?: string;
  /** The datapath exists but has more register cells than the tables are built for. */
  tooLarge?: boolean;
}

/**
 * Most register cells (partitions x registers) for which control tables are built. Tables,
 * simulation and RTL handle every register cell one by one, so their cost grows with this
 * product (a long delay line is that many registers); the bound keeps `pleat simulate` and
 * `pleat rtl` to seconds (about ten times the largest example, 16,688 cells). A datapath past it is refused with the figures.
 */
export const MAX_HARDWARE_CELLS = 250_000;

/** The folded datapath the tables are read from, every delay checked nonnegative. */
interface Datapath {
  g: IndexedGraph;
  N: number;
  /** Retiming value of each node. */
  r: Float64Array;
  /** Retimed delay of each edge. */
  wr: Float64Array;
  /** Folded delay of each edge (NaN for a tap). */
  folded: Float64Array;
}

/** Step 1: the analysis's own datapath when the caller has it; else rebuilt from the report. */
function checkedDatapath(design: Design, analysis: Analysis, datapath: FoldedDatapath | null): Datapath | string {
  if (!analysis.retiming.feasible) return 'no retiming makes every folded delay nonnegative';
  if (analysis.retiming.applied === false) return 'the plan needs retiming, which negative_delays: fail forbids';
  // The pipeline passes its datapath; callers that hold only a report rebuild it from the
  // reported retiming.
  const g = datapath?.graph ?? buildGraph(design);
  const N = g.factor;
  const r = new Float64Array(g.nodeCount);
  for (let i = 0; i < g.nodeCount; i++) r[i] = analysis.retiming.values[g.nodeIds[i]] ?? 0;
  let wr = datapath?.delays;
  if (!wr) {
    wr = new Float64Array(g.edgeCount);
    for (let e = 0; e < g.edgeCount; e++) wr[e] = g.edgeDelays[e] + r[g.edgeTo[e]] - r[g.edgeFrom[e]];
  }
  for (let e = 0; e < g.edgeCount; e++) {
    if (wr[e] < 0) return `the retiming leaves edge ${design.edges[e].from} -> ${design.edges[e].to} with ${wr[e]} delays`;
  }
  const folded = datapath?.folded ?? foldedDelays(g, wr);
  for (let e = 0; e < g.edgeCount; e++) {
    if (folded[e] < 0) return `edge ${design.edges[e].from} -> ${design.edges[e].to} keeps a negative folded delay (${folded[e]})`;
  }
  return { g, N, r, wr, folded };
}

/** The variables of lifetime analysis, as the analysis names them, each with its signal. */
interface Variables {
  vars: Variable[];
  byName: Map<string, number>;
  /** Name of the variable an edge of an unscheduled input holds (one per delayed edge). */
  heldVarOfEdge: Map<number, string>;
  signalOf: (u: number) => SignalSource;
}

/** Step 2: variables of lifetime analysis and the signal that produces each. */
function lifetimeVariablesOf(analysis: Analysis, dp: Datapath): Variables {
  const { g, folded, wr } = dp;
  const signalOf = (u: number): SignalSource =>
    g.role[u] === INPUT ? { kind: 'input', node: g.nodeIds[u] } : { kind: 'unit', unit: g.unitIds[g.unitOf[u]] };
  const lifetimes = analysis.lifetimes?.variables ?? lifetimeVariables(g, folded, wr);
  const vars: Variable[] = lifetimes.map((l) => ({ ...l, source: signalOf(g.nodeIndex.get(l.node)!) }));
  const byName = new Map(vars.map((v, i) => [v.variable, i]));
  const heldVarOfEdge = new Map<number, string>();
  for (let u = 0; u < g.nodeCount; u++) {
    if (!(g.role[u] === INPUT && g.slot[u] === NO_SLOT)) continue;
    const seen = new Map<string, number>();
    for (let k = g.outStart[u]; k < g.outStart[u + 1]; k++) {
      const e = g.outEdge[k];
      if (Number.isNaN(folded[e]) || !(wr[e] > 0)) continue;
      let name = `${g.nodeIds[u]}->${g.nodeIds[g.edgeTo[e]]}`;
      const again = (seen.get(name) ?? 0) + 1;
      seen.set(name, again);
      if (again > 1) name += `#${again}`;
      heldVarOfEdge.set(e, name);
    }
  }
  return { vars, byName, heldVarOfEdge, signalOf };
}

interface ChosenPlacement {
  placement: Placement;
  registers: number;
  allocationSource: ControlTables['allocationSource'];
  allocationNote?: string;
}

/** Step 3: the analysis's allocation when it holds exactly the live instances, else Pleat's own. */
function choosePlacement(analysis: Analysis, N: number, vars: Variable[]): ChosenPlacement {
  const fromAnalysis = analysis.allocation ? analysisPlacement(analysis.allocation, N, liveInstances(N, vars), vars) : 'the analysis has no allocation table';
  if (typeof fromAnalysis !== 'string') {
    return { placement: fromAnalysis, registers: analysis.allocation!.registers, allocationSource: 'analysis' };
  }
  const { placement, registers } = ownPlacement(N, vars);
  const allocationNote = `registers placed by Pleat's control tables (${fromAnalysis}${analysis.allocationOmitted ? `: ${analysis.allocationOmitted}` : ''})`;
  return { placement, registers, allocationSource: 'control', allocationNote };
}

/** Step 4: the route of every edge, the signal its consumer reads in its partition. */
function edgeRouter(design: Design, dp: Datapath, v: Variables, placement: Placement): (e: number, named?: boolean) => EdgeRoute {
  const { g, N, folded } = dp;
  const { vars, byName, heldVarOfEdge, signalOf } = v;
  // named = false: the source only (countMuxInputs), without the variable's name
  return (e: number, named = true): EdgeRoute => {
    const u = g.edgeFrom[e];
    const d = folded[e];
    if (Number.isNaN(d)) return { source: null, variable: null };
    if (d === 0) return { source: signalOf(u), variable: null };
    const name = g.role[u] === INPUT && g.slot[u] === NO_SLOT ? heldVarOfEdge.get(e)! : g.nodeIds[u];
    const vi = byName.get(name);
    if (vi === undefined) throw new Error(`no lifetime variable for edge ${design.edges[e].from} -> ${design.edges[e].to}`);
    const at = vars[vi].tIn + d;
    const key = instanceKey(vi, floorDiv(at, N));
    const reg = placement[mod(at, N)].get(key);
    if (reg === undefined) throw new Error(`allocation has no register holding ${displayKey(vars, key, mod(at, N), N)} in partition ${mod(at, N)}`);
    return { source: { kind: 'register', register: reg }, variable: named ? displayKey(vars, key, mod(at, N), N) : null };
  };
}

/** Step 5: per unit, the operation that starts in each partition. */
function unitTables(design: Design, g: IndexedGraph, operands: number[][]): UnitControl[] {
  const N = g.factor;
  return design.units.map((unit) => {
    const set = design.folding.sets[unit.id] ?? [];
    const partitions: UnitControl['partitions'] = [];
    let ports = 0;
    for (let t = 0; t < N; t++) {
      const id = set[t];
      if (id === null || id === undefined) {
        partitions.push(null);
        continue;
      }
      const i = g.nodeIndex.get(id)!;
      const node = design.nodes[i];
      const arity = operands[i].length;
      const op = nodeOp(node, arity);
      ports = Math.max(ports, arity);
      const scaled = op === 'gain' || op === 'mul';
      const slot: UnitSlot = { node: id, op, arity, coefficient: scaled ? (node.coefficient ?? null) : null };
      if (scaled && node.coefficientText !== undefined) slot.coefficientText = node.coefficientText;
      partitions.push(slot);
    }
    return { unit: unit.id, kind: unit.kind, stages: unit.stages, ports, partitions };
  });
}

/** Step 6: the multiplexer in front of each operand port of each unit. */
function muxTables(design: Design, g: IndexedGraph, units: UnitControl[], operands: number[][], route: (e: number) => EdgeRoute): MuxTable[] {
  const N = g.factor;
  const muxes: MuxTable[] = [];
  for (const uc of units) {
    for (let p = 0; p < uc.ports; p++) {
      const sources: SignalSource[] = [];
      const keys = new Map<string, number>();
      const select: MuxTable['select'] = [];
      const reads: MuxTable['reads'] = [];
      for (let t = 0; t < N; t++) {
        const slot = uc.partitions[t];
        const i = slot ? g.nodeIndex.get(slot.node)! : -1;
        if (!slot || p >= operands[i].length) {
          select.push(null);
          reads.push(null);
          continue;
        }
        const e = operands[i][p];
        const { source, variable } = route(e);
        const s = source!;
        const k = sourceKey(s);
        if (!keys.has(k)) {
          keys.set(k, sources.length);
          sources.push(s);
        }
        select.push(keys.get(k)!);
        reads.push({ from: design.edges[e].from, to: design.edges[e].to, variable });
      }
      muxes.push({ unit: uc.unit, port: p, sources, select, reads });
    }
  }
  return muxes;
}

/** Step 7: per register, what it holds and loads at the end of each partition, from the placement. */
function registerLoadTables(N: number, registers: number, placement: Placement, vars: Variable[]): RegisterTable[] {
  const registerTables: RegisterTable[] = [];
  for (let k = 0; k < registers; k++) {
    registerTables.push({ register: k, loads: new Array(N).fill(null), holds: new Array(N).fill(null) });
  }
  for (let t = 0; t < N; t++) {
    for (const [key, k] of placement[t]) registerTables[k].holds[t] = displayKey(vars, key, t, N);
    const nextT = (t + 1) % N;
    const before = new Map<string, number>();
    for (const [key, k] of placement[t]) before.set(nextKey(N, t, key), k);
    for (const [key, k] of placement[nextT]) {
      const was = before.get(key);
      if (was === k) continue;
      const source: SignalSource = was !== undefined ? { kind: 'register', register: was } : vars[splitKey(key)[0]].source;
      // Named as the value appears in its register during the next cycle.
      registerTables[k].loads[t] = { source, variable: displayKey(vars, key, nextT, N) };
    }
  }
  return registerTables;
}

/** Step 8: per output port, when it loads and which sample it carries. */
function outputControls(dp: Datapath, operands: number[][], route: (e: number) => EdgeRoute, signalOf: (u: number) => SignalSource): OutputControl[] {
  const { g, N, r, wr } = dp;
  const outputs: OutputControl[] = [];
  for (let y = 0; y < g.nodeCount; y++) {
    if (g.role[y] !== OUTPUT) continue;
    const id = g.nodeIds[y];
    const e = operands[y][0];
    if (e === undefined) {
      outputs.push({ node: id, mode: 'none', source: { kind: 'zero' }, cycle: 0, lag: 0, firstSample: 0, validAfterIterations: 0 });
      continue;
    }
    const u = g.edgeFrom[e];
    let mode: OutputControl['mode'];
    let source: SignalSource;
    let cycle: number;
    let lag: number;
    if (g.slot[y] !== NO_SLOT) {
      mode = 'slot';
      source = route(e).source!;
      cycle = g.slot[y];
      lag = r[y];
    } else {
      // A tap: the port loads the producer's result in the cycle it appears.
      mode = 'tap';
      source = signalOf(u);
      cycle = g.role[u] === OPERATION ? g.slot[u] + g.stages[u] : g.slot[u] === NO_SLOT ? 0 : g.slot[u];
      lag = r[y] - wr[e];
    }
    outputs.push({
      node: id,
      mode,
      source,
      cycle,
      lag,
      firstSample: Math.max(0, -lag),
      validAfterIterations: Math.max(0, lag) + floorDiv(cycle, N),
    });
  }
  return outputs;
}

/**
 * The control tables of the folded datapath of a design: per unit the operation of each
 * partition, per unit operand port a multiplexer table, per register its loads, per output port
 * when it loads and which sample it carries. Needs a feasible retiming in the analysis.
 */
export function controlTables(design: Design, analysis: Analysis, datapath: FoldedDatapath | null = null, maxCells = MAX_HARDWARE_CELLS): ControlResult {
  const cells = analysis.factor * (analysis.registers?.minimum ?? 0);
  if (analysis.retiming.feasible && analysis.retiming.applied !== false && cells > maxCells) {
    return {
      control: null,
      tooLarge: true,
      reason: `the datapath needs ${analysis.registers!.minimum.toLocaleString('en-US')} registers over ${analysis.factor.toLocaleString('en-US')} partitions (${cells.toLocaleString('en-US')} register cells); simulation and RTL build every register cell explicitly, up to ${maxCells.toLocaleString('en-US')} (docs/rtl.md)`,
    };
  }
  const dp = checkedDatapath(design, analysis, datapath);
  if (typeof dp === 'string') return { control: null, reason: dp };
  const { g, N } = dp;
  const variables = lifetimeVariablesOf(analysis, dp);
  const { placement, registers, allocationSource, allocationNote } = choosePlacement(analysis, N, variables.vars);
  const route = edgeRouter(design, dp, variables, placement);

  // Operand edges of each operation, in port order.
  const incoming: number[][] = design.nodes.map(() => []);
  for (let e = 0; e < g.edgeCount; e++) incoming[g.edgeTo[e]].push(e);
  const operands = incoming.map((list) => operandOrder(design, list));

  const units = unitTables(design, g, operands);
  const inputs = design.nodes.filter((n) => n.kind === 'input').map((n) => ({ node: n.id, slot: n.slot ?? null }));
  const latencyAdded = analysis.retiming.latencyAdded ?? 0;
  return {
    control: {
      factor: N,
      registers,
      allocationSource,
      ...(allocationNote ? { allocationNote } : {}),
      latencyAdded,
      inputs,
      units,
      muxes: muxTables(design, g, units, operands, route),
      registerTables: registerLoadTables(N, registers, placement, variables.vars),
      outputs: outputControls(dp, operands, route, variables.signalOf),
    },
  };
}

/**
 * The sum over unit operand ports of the distinct sources of their multiplexers, as the tables of
 * controlTables count them (`sources.length`), by the same steps (datapath, variables, placement,
 * routes) but without building the tables, and with no cell limit; null when there is no feasible
 * datapath. The planner scores every plan by it (shared/planning/evaluate.ts).
 */
export function countMuxInputs(design: Design, analysis: Analysis, datapath: FoldedDatapath | null = null): number | null {
  const dp = checkedDatapath(design, analysis, datapath);
  if (typeof dp === 'string') return null;
  const { g, N, folded } = dp;
  const variables = lifetimeVariablesOf(analysis, dp);
  // The source of an operand edge as a number: a register (>= 0), a unit's result or an input (< 0).
  let sourceOf: (e: number) => number;
  const units = g.unitIds.length;
  const direct = (u: number) => (g.role[u] === INPUT ? -1 - units - u : -1 - g.unitOf[u]);
  const chosen = analysis.allocation ? choosePlacement(analysis, N, variables.vars) : null;
  if (chosen && chosen.allocationSource === 'analysis') {
    const route = edgeRouter(design, dp, variables, chosen.placement);
    sourceOf = (e) => {
      if (folded[e] === 0) return direct(g.edgeFrom[e]);
      const s = route(e, false).source!;
      return s.kind === 'register' ? s.register : direct(g.edgeFrom[e]);
    };
  } else {
    // Pleat's own placement, on numbered instances (the tables' ownPlacement is this one, keyed by strings)
    const ln = liveNumbers(N, variables.vars);
    const np = numberedPlacement(N, ln);
    const { vars, byName, heldVarOfEdge } = variables;
    sourceOf = (e) => {
      const u = g.edgeFrom[e];
      const d = folded[e];
      if (d === 0) return direct(u);
      const vi = byName.get(g.role[u] === INPUT && g.slot[u] === NO_SLOT ? heldVarOfEdge.get(e)! : g.nodeIds[u]);
      if (vi === undefined) throw new Error(`no lifetime variable for edge ${design.edges[e].from} -> ${design.edges[e].to}`);
      const at = vars[vi].tIn + d;
      const reg = registerOf(np, mod(at, N), vi * ln.stride + floorDiv(at, N) - ln.minAge);
      if (reg < 0) throw new Error(`allocation has no register for edge ${design.edges[e].from} -> ${design.edges[e].to} in partition ${mod(at, N)}`);
      return reg;
    };
  }
  const incoming: number[][] = design.nodes.map(() => []);
  for (let e = 0; e < g.edgeCount; e++) incoming[g.edgeTo[e]].push(e);
  let total = 0;
  const keys = new Set<number>();
  for (const unit of design.units) {
    const set = design.folding.sets[unit.id] ?? [];
    const ops: number[][] = [];
    let ports = 0;
    for (let t = 0; t < N; t++) {
      const id = set[t];
      if (id === null || id === undefined) continue;
      const list = operandOrder(design, incoming[g.nodeIndex.get(id)!]);
      ops.push(list);
      ports = Math.max(ports, list.length);
    }
    for (let p = 0; p < ports; p++) {
      keys.clear();
      for (const list of ops) if (p < list.length) keys.add(sourceOf(list[p]));
      total += keys.size;
    }
  }
  return total;
}

/**
 * Largest register table (partitions x registers) that withControl attaches to a report. Building
 * the tables costs about as much as the whole analysis on designs past this size, and a CI check
 * should not pay for that on every commit; `pleat rtl` and `pleat simulate --tables` go up to
 * MAX_HARDWARE_CELLS.
 */
export const DEFAULT_MAX_CONTROL_CELLS = 20_000;

/**
 * The analysis with its control tables attached, for the report: null when no feasible datapath
 * exists; left out (no `control` field) when the register table would exceed maxCells, as the
 * analysis leaves out its allocation table. `pleat rtl` and `pleat simulate` go up to MAX_HARDWARE_CELLS.
 */
export function withControl(design: Design, analysis: Analysis, maxCells = DEFAULT_MAX_CONTROL_CELLS, datapath: FoldedDatapath | null = null): Analysis {
  const regs = analysis.registers?.minimum ?? 0;
  const cells = analysis.factor * regs;
  if (cells > maxCells) {
    // Said in the report, so a reader of it (the web report) can tell why the tables are missing.
    return {
      ...analysis,
      controlOmitted: `the register load table would have ${analysis.factor} partitions x ${regs} registers = ${cells} cells, more than the limit of ${maxCells} for a check report; ${cells <= MAX_HARDWARE_CELLS ? "'pleat simulate --tables' or 'pleat rtl' writes them in full" : `past ${MAX_HARDWARE_CELLS} cells 'pleat simulate' and 'pleat rtl' do not build them either`}`,
    };
  }
  return { ...analysis, control: controlTables(design, analysis, datapath).control };
}

/** The control tables as plain text lines, for a terminal: one line per unit, mux, register and output. */
export function controlText(c: ControlTables): string[] {
  const N = c.factor;
  const lines: string[] = [];
  const short = (s: SignalSource) => (s.kind === 'unit' ? s.unit : s.kind === 'input' ? s.node : s.kind === 'register' ? `R${s.register}` : '0');
  lines.push(`units (what starts in each partition 0..${N - 1}):`);
  for (const u of c.units) {
    const cells = u.partitions.map((p, t) => `${t}:${p ? `${p.node}${p.op ? `(${p.op})` : ''}` : '-'}`);
    lines.push(`  ${u.unit} [${u.kind}, ${u.stages} stage${u.stages === 1 ? '' : 's'}]  ${cells.join(' ')}`);
  }
  lines.push('multiplexers (operand port: inputs; source selected in each partition):');
  for (const m of c.muxes) {
    const cells = m.select.map((s, t) => `${t}:${s === null ? '-' : short(m.sources[s])}`);
    lines.push(`  ${m.unit}.a${m.port}  ${m.sources.length} input${m.sources.length === 1 ? '' : 's'}  ${cells.join(' ')}`);
  }
  lines.push(`registers (${c.registers}; load at the end of a partition; ${c.allocationSource === 'analysis' ? 'allocation of the analysis' : 'allocation of the control tables'}):`);
  for (const r of c.registerTables) {
    const cells = r.loads.map((l, t) => `${t}:${l ? `${short(l.source)}>${l.variable}` : '-'}`);
    lines.push(`  R${r.register}  ${cells.join(' ')}`);
  }
  lines.push('outputs:');
  for (const o of c.outputs) {
    const how = o.mode === 'slot' ? `read in partition ${o.cycle}` : o.mode === 'tap' ? `taken when produced, cycle ${o.cycle}` : 'no edge feeds it';
    lines.push(`  ${o.node}  ${how} from ${short(o.source)}; sample ${o.firstSample}+k valid in cycle ${N * Math.max(0, o.lag) + o.cycle + 1}+${N}k`);
  }
  if (c.allocationNote) lines.push(`note: ${c.allocationNote}`);
  return lines;
}
