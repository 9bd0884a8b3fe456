// Cycle-by-cycle model of a folded datapath built only from its control tables (Parhi, ch. 6:
// the folding transformation), compared with the unfolded DFG evaluated from zero state.
// Convention: cycle 0 is the first cycle after reset, in partition 0; registers load at the end of a cycle.
import {
  exactArithmetic,
  decimalBits,
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
import type { Analysis, ControlTables, Design, Diagnostic, SignalSource } from '../types';

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
 * Runs the folded datapath for `cycles` cycles. Input streams are indexed by iteration: a held
 * input shows sample l during the whole of iteration l, an input with a slot only in that
 * partition (garbage otherwise); samples past the end of a stream are zero.
 */
export function runFolded<T>(control: ControlTables, ar: Arithmetic<T>, inputs: Record<string, T[]>, cycles: number): FoldedRun<T> {
  const N = control.factor;
  const units = control.units;
  const U = units.length;
  const unitIndex = new Map(units.map((u, i) => [u.unit, i]));
  const slotOf = new Map(control.inputs.map((x) => [x.node, x.slot]));
  // Mux of unit i, port p.
  const mux = units.map((u) => new Array(u.ports));
  for (const m of control.muxes) mux[unitIndex.get(m.unit)!][m.port] = m;

  // Per partition, an order of the units in which every combinational (0-stage) producer comes
  // before the units that read it in the same cycle.
  const order: number[][] = [];
  for (let t = 0; t < N; t++) {
    const deps: number[][] = units.map(() => []);
    const indeg = new Array(U).fill(0);
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
    const queue = indeg.map((d, i) => (d === 0 ? i : -1)).filter((i) => i >= 0);
    while (queue.length) {
      const i = queue.shift()!;
      seq.push(i);
      for (const k of deps[i]) if (--indeg[k] === 0) queue.push(k);
    }
    if (seq.length < U) throw new Error(`combinational loop among 0-stage units in partition ${t}`);
    order.push(seq);
  }

  const pipes: Val<T>[][] = units.map((u) => new Array<Val<T>>(u.stages).fill(ar.zero));
  const unitOut: Val<T>[] = new Array(U).fill(null);
  const regs: Val<T>[] = new Array(control.registers).fill(ar.zero);
  // The loads of each partition, listed once: a cycle then costs its loads, not the whole file.
  const loadsAt: { register: number; source: SignalSource }[][] = Array.from({ length: N }, () => []);
  for (const rt of control.registerTables) {
    for (let p = 0; p < N; p++) {
      const load = rt.loads[p];
      if (load) loadsAt[p].push({ register: rt.register, source: load.source });
    }
  }
  const loaded: Val<T>[] = [];
  const strobes: Record<string, Strobe<T>[]> = {};
  for (const o of control.outputs) strobes[o.node] = [];

  let cycle = 0;
  let iteration = 0;
  let t = 0;
  const inputValue = (node: string): Val<T> => {
    const slot = slotOf.get(node);
    if (slot !== null && slot !== undefined && slot !== t) return null;
    const s = inputs[node];
    return s && iteration < s.length ? s[iteration] : ar.zero;
  };
  const read = (s: SignalSource): Val<T> => {
    switch (s.kind) {
      case 'unit':
        return unitOut[unitIndex.get(s.unit)!];
      case 'input':
        return inputValue(s.node);
      case 'register':
        return regs[s.register];
      case 'zero':
        return ar.zero;
    }
  };
  const operands: T[] = [];

  for (; cycle < cycles; cycle++) {
    iteration = Math.floor(cycle / N);
    t = cycle - iteration * N;
    // Pipelined units show what they started `stages` cycles ago.
    for (let i = 0; i < U; i++) if (units[i].stages > 0) unitOut[i] = pipes[i][cycle % units[i].stages];
    for (const i of order[t]) {
      const u = units[i];
      const slot = u.partitions[t];
      let result: Val<T> = null;
      if (slot && slot.op) {
        operands.length = 0;
        let ok = true;
        for (let p = 0; p < slot.arity; p++) {
          const m = mux[i][p];
          const v = read(m.sources[m.select[t]!]);
          if (v === null) {
            ok = false;
            break;
          }
          operands.push(v);
        }
        result = ok ? evalNode(ar, slot.node, slot.op, operands, slot.coefficientText ?? slot.coefficient, cycle) : null;
      }
      if (u.stages === 0) unitOut[i] = result;
      else pipes[i][cycle % u.stages] = result;
    }
    // End of the cycle: output ports and registers load together.
    for (const o of control.outputs) {
      if (o.cycle % N !== t || iteration < o.validAfterIterations) continue;
      const v = read(o.source);
      strobes[o.node].push({ cycle: cycle + 1, value: v !== null && ar.output && o.mode !== 'none' ? ar.output(o.node, v, cycle) : v });
    }
    // Every load reads the values of this cycle before any register changes.
    const loads = loadsAt[t];
    loaded.length = loads.length;
    for (let k = 0; k < loads.length; k++) loaded[k] = read(loads[k].source);
    for (let k = 0; k < loads.length; k++) regs[loads[k].register] = loaded[k];
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
  const guard = ar.name === 'exact' ? (v: T) => decimalBits(v as never) > maxBits : undefined;
  // Exact runs: every exact value outside its signal's format is what fixed point would overflow on.
  const outOfRange = new Map<number, { count: number; first: number }>();
  const limits = plan.signals.map((sf) => {
    const { min, max } = rawRange(sf.format);
    return { min: rawToDecimal(min, sf.format.frac), max: rawToDecimal(max, sf.format.frac) };
  });
  const observe =
    ar.name === 'exact'
      ? (v: number, it: number, value: T) => {
          if (graph.nodes[v].kind === 'input') return;
          const x = value as unknown as Decimal;
          if (decimalLess(x, limits[v].min) || decimalLess(limits[v].max, x)) {
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

function decimalLess(a: Decimal, b: Decimal): boolean {
  const e = Math.max(a.e, b.e);
  return a.m * 10n ** BigInt(e - a.e) < b.m * 10n ** BigInt(e - b.e);
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
    const exact = evaluateReference(design, graph, ex, streams, refIterations, (v) => decimalBits(v) > 4096);
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
