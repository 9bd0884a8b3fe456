// Cycle-by-cycle model of a folded datapath built only from its control tables (Parhi, ch. 6:
// the folding transformation), compared with the unfolded DFG evaluated from zero state.
// Convention: cycle 0 is the first cycle after reset, in partition 0; registers load at the end of a cycle.
import {
  exactArithmetic,
  decimalExceedsBits,
  DecimalRange,
  randomStreams,
  evalNode,
  DEFAULT_FIXED,
  type Arithmetic,
  type FixedFormat,
} from './arith';
import { controlTables } from './control';
import { evaluateReference, resolveArithmetic, type ResolvedGraph } from './reference';
import { formatPlan, type FormatPlan } from './formats';
import { formatArithmetic } from './formatArithmetic';
import { bitGrowth, type BitGrowth } from './range';
import { formatName, rawRange } from '../design/numberFormat';
import type { Decimal } from './arith';
import type { Analysis, ControlTables, Design, Diagnostic, MuxTable, SignalSource, UnitSlot } from '../types';

/** A value, or null where the hardware would carry garbage (an input outside its valid cycle, an idle unit). */
type Val<T> = T | null;

export interface Strobe<T> {
  /** Cycle during which the output port shows the sample with its valid strobe high. */
  cycle: number;
  value: Val<T>;
}

export interface FoldedRun<T> {
  cycles: number;
  /** Valid strobes of every output port, in order. */
  strobes: Record<string, Strobe<T>[]>;
}

/**
 * The cycle model of a folded datapath, built once from the control tables as flat arrays: every
 * signal a multiplexer, a register load or an output can read is a slot of one value array
 * (units' results, registers, inputs, zero), so a cycle only indexes arrays and allocates nothing
 * beyond the arithmetic's own values and the strobes it records.
 */
interface FoldedModel {
  N: number;
  U: number;
  /** Value slots: units 0..U-1, registers U..U+R-1, zero at U+R, then the inputs. */
  slots: number;
  regBase: number;
  inputBase: number;
  zeroSlot: number;
  /** Pipelined units and where each one's stages start in the flat pipeline array. */
  piped: Int32Array;
  stagesOf: Int32Array;
  pipeBase: Int32Array;
  pipeLength: number;
  /** Per partition: units set to null first (idle, or no arithmetic), then the active ones in dependency order. */
  idle: Int32Array[];
  active: Int32Array[];
  /** Per partition, per active unit (in `active` order): the offset of its operand slots in `operandSlots`. */
  operandStart: Int32Array[];
  operandSlots: Int32Array[];
  slotsAt: (UnitSlot | null)[][];
  /** Per input (value slot inputBase + k): its node and partition (-1 when held). */
  inputNodes: string[];
  inputPartition: Int32Array;
  /** Per partition: the outputs that load at its end (indices into control.outputs), and their source slots. */
  outputsAt: Int32Array[];
  outputSlot: Int32Array;
  /** Per partition: the registers that load at its end and the slots they read. */
  loadRegister: Int32Array[];
  loadSlot: Int32Array[];
  maxLoads: number;
  maxArity: number;
}

function buildFoldedModel(control: ControlTables): FoldedModel {
  const N = control.factor;
  const units = control.units;
  const U = units.length;
  const R = control.registers;
  const unitIndex = new Map(units.map((u, i) => [u.unit, i]));
  const inputIndex = new Map(control.inputs.map((x, i) => [x.node, i]));
  const regBase = U;
  const zeroSlot = U + R;
  const inputBase = zeroSlot + 1;
  const inputNodes = control.inputs.map((x) => x.node);
  const inputPartition = control.inputs.map((x) => (x.slot === null || x.slot === undefined ? -1 : x.slot));
  const slotOfSource = (s: SignalSource): number => {
    switch (s.kind) {
      case 'unit':
        return unitIndex.get(s.unit)!;
      case 'input': {
        let k = inputIndex.get(s.node);
        if (k === undefined) {
          // A source the input table does not list reads its stream in every partition.
          k = inputNodes.length;
          inputIndex.set(s.node, k);
          inputNodes.push(s.node);
          inputPartition.push(-1);
        }
        return inputBase + k;
      }
      case 'register':
        return regBase + s.register;
      case 'zero':
        return zeroSlot;
    }
  };
  // Mux of unit i, port p.
  const mux: MuxTable[][] = units.map((u) => new Array(u.ports));
  for (const m of control.muxes) mux[unitIndex.get(m.unit)!][m.port] = m;

  const stagesOf = Int32Array.from(units, (u) => u.stages);
  const pipedList: number[] = [];
  const pipeBase = new Int32Array(U);
  let pipeLength = 0;
  units.forEach((u, i) => {
    if (u.stages > 0) {
      pipedList.push(i);
      pipeBase[i] = pipeLength;
      pipeLength += u.stages;
    }
  });

  // Per partition, an order of the units in which every combinational (0-stage) producer comes
  // before the units that read it in the same cycle.
  const idle: Int32Array[] = [];
  const active: Int32Array[] = [];
  const operandStart: Int32Array[] = [];
  const operandSlots: Int32Array[] = [];
  const slotsAt: (UnitSlot | null)[][] = [];
  let maxArity = 0;
  for (let t = 0; t < N; t++) {
    const deps: number[][] = units.map(() => []);
    const indeg = new Int32Array(U);
    units.forEach((u, i) => {
      if (!u.partitions[t]) return;
      for (let p = 0; p < u.ports; p++) {
        const sel = mux[i][p].select[t];
        if (sel === null) continue;
        const s: SignalSource = mux[i][p].sources[sel];
        if (s.kind !== 'unit') continue;
        const j = unitIndex.get(s.unit)!;
        if (units[j].stages === 0) {
          deps[j].push(i);
          indeg[i]++;
        }
      }
    });
    const seq: number[] = [];
    for (let i = 0; i < U; i++) if (indeg[i] === 0) seq.push(i);
    for (let head = 0; head < seq.length; head++) for (const k of deps[seq[head]]) if (--indeg[k] === 0) seq.push(k);
    if (seq.length < U) throw new Error(`combinational loop among 0-stage units in partition ${t}`);
    const idleT: number[] = [];
    const activeT: number[] = [];
    const starts: number[] = [];
    const opSlots: number[] = [];
    const slotList: (UnitSlot | null)[] = [];
    for (const i of seq) {
      const slot = units[i].partitions[t];
      if (!slot || !slot.op) {
        idleT.push(i);
        continue;
      }
      activeT.push(i);
      slotList.push(slot);
      starts.push(opSlots.length);
      for (let p = 0; p < slot.arity; p++) {
        const m = mux[i][p];
        opSlots.push(slotOfSource(m.sources[m.select[t]!]));
      }
      maxArity = Math.max(maxArity, slot.arity);
    }
    starts.push(opSlots.length);
    idle.push(Int32Array.from(idleT));
    active.push(Int32Array.from(activeT));
    operandStart.push(Int32Array.from(starts));
    operandSlots.push(Int32Array.from(opSlots));
    slotsAt.push(slotList);
  }

  const outputsAt: number[][] = Array.from({ length: N }, () => []);
  control.outputs.forEach((o, k) => outputsAt[o.cycle % N].push(k));
  const outputSlot = Int32Array.from(control.outputs, (o) => slotOfSource(o.source));
  // The loads of each partition, listed once: a cycle then costs its loads, not the whole file.
  const loadRegister: number[][] = Array.from({ length: N }, () => []);
  const loadSlot: number[][] = Array.from({ length: N }, () => []);
  for (const rt of control.registerTables) {
    for (let p = 0; p < N; p++) {
      const load = rt.loads[p];
      if (!load) continue;
      loadRegister[p].push(regBase + rt.register);
      loadSlot[p].push(slotOfSource(load.source));
    }
  }
  return {
    N,
    U,
    slots: inputBase + inputNodes.length,
    regBase,
    inputBase,
    zeroSlot,
    piped: Int32Array.from(pipedList),
    stagesOf,
    pipeBase,
    pipeLength,
    idle,
    active,
    operandStart,
    operandSlots,
    slotsAt,
    inputNodes,
    inputPartition: Int32Array.from(inputPartition),
    outputsAt: outputsAt.map((l) => Int32Array.from(l)),
    outputSlot,
    loadRegister: loadRegister.map((l) => Int32Array.from(l)),
    loadSlot: loadSlot.map((l) => Int32Array.from(l)),
    maxLoads: loadSlot.reduce((m, l) => Math.max(m, l.length), 0),
    maxArity,
  };
}

/**
 * Runs the folded datapath for `cycles` cycles. Input streams are indexed by iteration: a held
 * input shows sample l during the whole of iteration l, an input with a slot only in that
 * partition (garbage otherwise); samples past the end of a stream are zero.
 */
export function runFolded<T>(control: ControlTables, ar: Arithmetic<T>, inputs: Record<string, T[]>, cycles: number): FoldedRun<T> {
  const m = buildFoldedModel(control);
  const { N, piped, stagesOf, pipeBase, inputBase, zeroSlot } = m;
  const outputs = control.outputs;
  // Every readable signal in one array; registers start at zero, units and inputs as the cycle sets them.
  const vals: Val<T>[] = new Array<Val<T>>(m.slots).fill(null);
  for (let r = m.regBase; r <= zeroSlot; r++) vals[r] = ar.zero;
  const pipes: Val<T>[] = new Array<Val<T>>(m.pipeLength).fill(ar.zero);
  const streams: (T[] | undefined)[] = m.inputNodes.map((id) => inputs[id]);
  const loaded: Val<T>[] = new Array<Val<T>>(m.maxLoads).fill(null);
  // One operand array per arity, reused: evalNode reads the operands and keeps none of them.
  const operandsOf: T[][] = Array.from({ length: m.maxArity + 1 }, (_, a) => new Array<T>(a));
  const strobes: Record<string, Strobe<T>[]> = {};
  for (const o of outputs) strobes[o.node] = [];
  const strobeLists = outputs.map((o) => strobes[o.node]);
  const outputMode = outputs.map((o) => (ar.output && o.mode !== 'none' ? true : false));

  for (let cycle = 0; cycle < cycles; cycle++) {
    const iteration = Math.floor(cycle / N);
    const t = cycle - iteration * N;
    // Inputs: a held input shows its sample all iteration, a slotted one only in its partition.
    for (let k = 0; k < streams.length; k++) {
      const p = m.inputPartition[k];
      if (p >= 0 && p !== t) vals[inputBase + k] = null;
      else {
        const s = streams[k];
        vals[inputBase + k] = s && iteration < s.length ? s[iteration] : ar.zero;
      }
    }
    // Pipelined units show what they started `stages` cycles ago.
    for (let k = 0; k < piped.length; k++) {
      const i = piped[k];
      vals[i] = pipes[pipeBase[i] + (cycle % stagesOf[i])];
    }
    const idle = m.idle[t];
    for (let k = 0; k < idle.length; k++) {
      const i = idle[k];
      if (stagesOf[i] === 0) vals[i] = null;
      else pipes[pipeBase[i] + (cycle % stagesOf[i])] = null;
    }
    const active = m.active[t];
    const starts = m.operandStart[t];
    const opSlots = m.operandSlots[t];
    const slots = m.slotsAt[t];
    for (let k = 0; k < active.length; k++) {
      const i = active[k];
      const slot = slots[k]!;
      const from = starts[k];
      const arity = starts[k + 1] - from;
      const operands = operandsOf[arity];
      let result: Val<T> = null;
      let ok = true;
      for (let p = 0; p < arity; p++) {
        const v = vals[opSlots[from + p]];
        if (v === null) {
          ok = false;
          break;
        }
        operands[p] = v;
      }
      if (ok) result = evalNode(ar, slot.node, slot.op!, operands, slot.coefficientText ?? slot.coefficient, cycle);
      if (stagesOf[i] === 0) vals[i] = result;
      else pipes[pipeBase[i] + (cycle % stagesOf[i])] = result;
    }
    // End of the cycle: output ports and registers load together.
    const outs = m.outputsAt[t];
    for (let k = 0; k < outs.length; k++) {
      const o = outs[k];
      if (iteration < outputs[o].validAfterIterations) continue;
      const v = vals[m.outputSlot[o]];
      strobeLists[o].push({ cycle: cycle + 1, value: v !== null && outputMode[o] ? ar.output!(outputs[o].node, v, cycle) : v });
    }
    // Every load reads the values of this cycle before any register changes.
    const regs = m.loadRegister[t];
    const srcs = m.loadSlot[t];
    for (let k = 0; k < srcs.length; k++) loaded[k] = vals[srcs[k]];
    for (let k = 0; k < regs.length; k++) vals[regs[k]] = loaded[k];
  }
  return { cycles, strobes };
}

// ---------------------------------------------------------------- comparison with the reference

export interface SimulationOptions {
  iterations?: number;
  seed?: number;
  /** 'exact' (rationals, default) or 'fixed' (the RTL's W-bit two's complement). */
  arithmetic?: 'exact' | 'fixed';
  fixed?: FixedFormat;
  /** Exact runs stop when a value needs more bits than this (loops that square a signal grow fast). */
  maxBits?: number;
}

export interface OutputAlignment {
  node: string;
  mode: 'slot' | 'tap' | 'none';
  /** Hardware iteration l presents sample l - lag. */
  lag: number;
  firstSample: number;
  /** Cycle of the first valid strobe (cycle 0 = first cycle after reset). */
  firstStrobeCycle: number;
  samplesCompared: number;
}

export interface Mismatch {
  output: string;
  /** Sample index of the unfolded output. */
  sample: number;
  /** Hardware iteration that presented it, and the cycle of its strobe. */
  iteration: number;
  cycle: number;
  expected: string;
  actual: string;
}

export interface SimulationReport {
  design: string;
  arithmetic: 'exact' | 'fixed';
  fixed: FixedFormat | null;
  seed: number;
  factor: number;
  latencyAdded: number;
  /** Samples of each output asked for (--iterations). */
  samplesRequested: number;
  /** Samples of each output compared (fewer than asked only when exact values outgrew the guard). */
  samplesPerOutput: number;
  /** Iterations the folded hardware ran: the samples plus the longest wait for a first sample. */
  hardwareIterations: number;
  cycles: number;
  samplesCompared: number;
  outputs: OutputAlignment[];
  match: boolean;
  firstMismatch: Mismatch | null;
  allocationSource: ControlTables['allocationSource'];
  note?: string;
  /** Number formats: overflows, and in fixed runs the error against the exact model. */
  fixedPoint: FixedPointReport;
}

/** Overflows of one node in a run. */
export interface NodeOverflow {
  node: string;
  format: string;
  count: number;
  /** Iteration of the unfolded graph of the first. */
  firstIteration: number;
  /** Cycle of the folded datapath of the first (fixed runs). */
  firstCycle: number | null;
}

/** The fixed-point datapath against the exact model, per output. */
export interface OutputAccuracy {
  node: string;
  format: string;
  samples: number;
  /** Largest |fixed - exact|, as a number and in LSBs of the output's format. */
  maxError: number;
  maxErrorLsb: number;
  /** Signal-to-quantisation-noise ratio 10 log10(sum exact^2 / sum error^2); null when the error is zero. */
  sqnrDb: number | null;
}

export interface FixedPointReport {
  /** Whether the design names formats (else every signal is Q(W-1).0, truncate, wrap). */
  declared: boolean;
  /**
   * exact runs: exact values outside their signal's format (what a fixed-point datapath would
   * overflow on); fixed runs: results that overflowed (wrapped or saturated).
   */
  overflowKind: 'exact-out-of-range' | 'fixed-overflow';
  overflowCount: number;
  overflows: NodeOverflow[];
  accuracy: OutputAccuracy[] | null;
  growth: BitGrowth;
}

export interface SimulationResult {
  report: SimulationReport | null;
  /** Errors that keep the design from being simulated (no arithmetic, no feasible datapath). */
  diagnostics: Diagnostic[];
}

export const DEFAULT_ITERATIONS = 64;
export const DEFAULT_SEED = 1;

/** Input samples: integers of this many bits (the RTL's width for fixed runs, 16 bits otherwise). */
function inputBits(opts: SimulationOptions): number {
  return opts.arithmetic === 'fixed' ? Math.min((opts.fixed ?? DEFAULT_FIXED).width, 32) : 16;
}

/**
 * Builds the folded datapath of a design from its control tables, runs it on seeded random
 * inputs and compares every output sample with the unfolded DFG (zero initial state), shifted
 * by the latency that retiming adds. Both sides use the same arithmetic.
 */
export function simulateDesign(design: Design, analysis: Analysis, opts: SimulationOptions = {}): SimulationResult {
  const { graph, diagnostics } = resolveArithmetic(design);
  if (!graph) return { report: null, diagnostics };
  const control = analysis.control ?? controlTables(design, analysis).control;
  if (!control) {
    return {
      report: null,
      diagnostics: [
        {
          severity: 'error',
          code: 'sim-infeasible',
          message: 'the plan has no feasible folded datapath (a folded delay stays negative); nothing to simulate',
          line: null,
          column: null,
        },
      ],
    };
  }
  const fixed = opts.fixed ?? DEFAULT_FIXED;
  const plan = formatPlan(design, fixed.width);
  if (opts.arithmetic === 'fixed') {
    return { report: compare(design, graph, control, () => formatArithmetic(design, graph, plan, fixed), opts, plan), diagnostics: [] };
  }
  return { report: compare(design, graph, control, exactArithmetic, opts, plan), diagnostics: [] };
}

/** Raw input samples: over each input's format when the design names formats, else as before. */
export function inputStreams(design: Design, plan: FormatPlan, iterations: number, seed: number, legacyBits: number): Record<string, bigint[]> {
  const ids = design.nodes.filter((n) => n.kind === 'input').map((n) => n.id);
  if (!plan.declared) return randomStreams(ids, iterations, seed, legacyBits);
  // One stream per input, from one generator in file order, as randomStreams does.
  const raw = randomStreams(ids, iterations, seed, 32);
  const out: Record<string, bigint[]> = {};
  design.nodes.forEach((n, i) => {
    if (n.kind !== 'input') return;
    const f = plan.signals[i].format;
    const { min, max } = rawRange(f);
    const span = max - min + 1n;
    // 32 random bits, reduced into the range (uniform enough for test vectors; wide formats get 32 bits).
    out[n.id] = raw[n.id].map((v) => (span > 1n << 32n ? v : min + (BigInt.asUintN(32, v) % span)));
  });
  return out;
}

/** A raw integer of a format with `frac` fraction bits as the exact decimal it stands for. */
function rawToDecimal(v: bigint, frac: number): Decimal {
  return { m: v * 5n ** BigInt(frac), e: frac };
}

function compare<T>(
  design: Design,
  graph: ResolvedGraph,
  control: ControlTables,
  makeAr: () => Arithmetic<T>,
  opts: SimulationOptions,
  plan: FormatPlan,
): SimulationReport {
  const ar = makeAr();
  const N = control.factor;
  const K = opts.iterations ?? DEFAULT_ITERATIONS;
  const seed = opts.seed ?? DEFAULT_SEED;
  // K samples of every output: the hardware runs until the output with the longest wait has shown K.
  const wait = control.outputs.reduce((m, o) => Math.max(m, Math.max(0, o.lag)), 0);
  const H = K + wait;
  const inputIds = design.nodes.filter((n) => n.kind === 'input').map((n) => n.id);
  const raw = inputStreams(design, plan, H, seed, inputBits(opts));
  const streams: Record<string, T[]> = {};
  const inFrac = (id: string) => plan.signals[graph.index.get(id)!].format.frac;
  for (const id of inputIds) {
    // Exact runs of a design with formats take each sample as the number its format says.
    streams[id] = ar.name === 'exact' && plan.declared ? (raw[id].map((v) => rawToDecimal(v, inFrac(id))) as T[]) : raw[id].map((v) => ar.fromInt(v));
  }

  let refIterations = H;
  for (const o of control.outputs) refIterations = Math.max(refIterations, o.firstSample + K);
  const maxBits = opts.maxBits ?? 4096;
  const guard = ar.name === 'exact' ? (v: T) => decimalExceedsBits(v as never, maxBits) : undefined;
  // Exact runs: every exact value outside its signal's format is what fixed point would overflow on.
  const outOfRange = new Map<number, { count: number; first: number }>();
  // One range per distinct format, so signals of one format share its scaled bounds.
  const ranges = new Map<string, DecimalRange>();
  const limits = plan.signals.map((sf) => {
    const { min, max } = rawRange(sf.format);
    const key = `${min}/${max}/${sf.format.frac}`;
    let r = ranges.get(key);
    if (!r) ranges.set(key, (r = new DecimalRange(rawToDecimal(min, sf.format.frac), rawToDecimal(max, sf.format.frac))));
    return r;
  });
  const observe =
    ar.name === 'exact'
      ? (v: number, it: number, value: T) => {
          if (graph.nodes[v].kind === 'input') return;
          const x = value as unknown as Decimal;
          if (limits[v].outside(x)) {
            const o = outOfRange.get(v);
            if (o) o.count++;
            else outOfRange.set(v, { count: 1, first: it });
          }
        }
      : undefined;
  const ref = evaluateReference(design, graph, ar, streams, refIterations, guard, observe);

  // Samples per output that the reference covers.
  let Keff = K;
  let note: string | undefined;
  if (ref.completed < refIterations) {
    for (const o of control.outputs) Keff = Math.min(Keff, ref.completed - o.firstSample);
    Keff = Math.max(0, Keff);
    note = `exact values outgrew ${maxBits} bits at ${ref.stoppedAt!.node}, iteration ${ref.stoppedAt!.iteration}: compared ${Keff} of ${K} samples per output (try --arithmetic fixed)`;
  }
  let lastEvent = -1;
  for (const o of control.outputs) lastEvent = Math.max(lastEvent, N * (Math.max(0, o.lag) + Keff - 1) + o.cycle);
  const cycles = Keff === 0 ? 0 : lastEvent + 1;
  const foldedAr = makeAr();
  const run = runFolded(control, foldedAr, streams, cycles);

  let samplesCompared = 0;
  let firstMismatch: Mismatch | null = null;
  const outputs: OutputAlignment[] = [];
  for (const o of control.outputs) {
    const l0 = Math.max(o.lag, 0);
    const got = run.strobes[o.node];
    for (let k = 0; k < Keff; k++) {
      const sample = o.firstSample + k;
      const iteration = l0 + k;
      const strobeCycle = N * iteration + o.cycle + 1;
      const want = ref.outputs[o.node][sample];
      const have = got[k];
      samplesCompared++;
      const bad = !have || have.value === null || have.cycle !== strobeCycle || !ar.equals(have.value, want);
      if (bad && (!firstMismatch || strobeCycle < firstMismatch.cycle)) {
        firstMismatch = {
          output: o.node,
          sample,
          iteration,
          cycle: strobeCycle,
          expected: ar.format(want),
          actual: !have ? 'no sample' : have.value === null ? 'undefined (garbage reached the port)' : have.cycle !== strobeCycle ? `strobe at cycle ${have.cycle}` : ar.format(have.value),
        };
      }
    }
    outputs.push({
      node: o.node,
      mode: o.mode,
      lag: o.lag,
      firstSample: o.firstSample,
      firstStrobeCycle: N * l0 + o.cycle + 1,
      samplesCompared: Keff,
    });
  }
  const fixedPoint = fixedPointReport(design, graph, control, plan, ar, foldedAr, ref.outputs as unknown as Record<string, bigint[]>, raw, outOfRange, Keff, refIterations);
  return {
    design: design.name,
    arithmetic: ar.name,
    fixed: ar.name === 'fixed' ? { ...(opts.fixed ?? DEFAULT_FIXED), width: plan.container } : null,
    seed,
    factor: N,
    latencyAdded: control.latencyAdded,
    samplesRequested: K,
    samplesPerOutput: Keff,
    hardwareIterations: Keff === 0 ? 0 : Keff + wait,
    cycles,
    samplesCompared,
    outputs,
    match: firstMismatch === null,
    firstMismatch,
    allocationSource: control.allocationSource,
    ...(note ? { note } : {}),
    fixedPoint,
  };
}

/** The nearest double of an exact decimal, however long its digits. */
function decimalNumber(d: Decimal): number {
  return Number.parseFloat(`${d.m}e-${d.e}`);
}

/**
 * Overflows of the run, and for fixed runs the outputs against the exact model driven by the
 * same samples (each raw input read as the number its format stands for).
 */
function fixedPointReport<T>(
  design: Design,
  graph: ResolvedGraph,
  control: ControlTables,
  plan: FormatPlan,
  ar: Arithmetic<T>,
  foldedAr: Arithmetic<T>,
  refOutputs: Record<string, bigint[]>,
  raw: Record<string, bigint[]>,
  outOfRange: Map<number, { count: number; first: number }>,
  K: number,
  refIterations: number,
): FixedPointReport {
  const growth = bitGrowth(design, graph, plan);
  const fmtOf = (id: string) => plan.signals[graph.index.get(id)!].format;
  const overflows: NodeOverflow[] = [];
  let accuracy: OutputAccuracy[] | null = null;
  if (ar.name === 'exact') {
    for (const [v, o] of [...outOfRange].sort((a, b) => a[1].first - b[1].first || a[0] - b[0])) {
      overflows.push({ node: graph.nodes[v].id, format: formatName(plan.signals[v].format), count: o.count, firstIteration: o.first, firstCycle: null });
    }
  } else {
    const refOv = (ar as unknown as { overflows: Map<string, { count: number; first: number }> }).overflows;
    const foldOv = (foldedAr as unknown as { overflows: Map<string, { count: number; first: number }> }).overflows;
    for (const [id, o] of [...refOv].sort((a, b) => a[1].first - b[1].first)) {
      overflows.push({ node: id, format: formatName(fmtOf(id)), count: o.count, firstIteration: o.first, firstCycle: foldOv.get(id)?.first ?? null });
    }
    // The exact model on the same samples, each read as the number its format stands for.
    const ex = exactArithmetic();
    const streams: Record<string, Decimal[]> = {};
    for (const [id, s] of Object.entries(raw)) streams[id] = s.map((v) => rawToDecimal(v, fmtOf(id).frac));
    const exact = evaluateReference(design, graph, ex, streams, refIterations, (v) => decimalExceedsBits(v, 4096));
    accuracy = [];
    for (const o of control.outputs) {
      const f = fmtOf(o.node);
      const n = Math.min(K, exact.completed - o.firstSample);
      let sig = 0;
      let err = 0;
      let maxError = 0;
      for (let k = 0; k < n; k++) {
        const i = o.firstSample + k;
        const y = exact.outputs[o.node][i];
        const q = rawToDecimal(refOutputs[o.node][i], f.frac);
        const yv = decimalNumber(y);
        const e = Math.abs(decimalNumber(ex.sub(q, y)));
        sig += yv * yv;
        err += e * e;
        maxError = Math.max(maxError, e);
      }
      accuracy.push({
        node: o.node,
        format: formatName(f),
        samples: Math.max(0, n),
        maxError,
        maxErrorLsb: maxError * 2 ** f.frac,
        sqnrDb: err === 0 ? null : 10 * Math.log10(sig / err),
      });
    }
  }
  return {
    declared: plan.declared,
    overflowKind: ar.name === 'exact' ? 'exact-out-of-range' : 'fixed-overflow',
    overflowCount: overflows.reduce((a, o) => a + o.count, 0),
    overflows,
    accuracy,
    growth,
  };
}
