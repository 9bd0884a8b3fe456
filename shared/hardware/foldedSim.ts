// Cycle-by-cycle model of a folded datapath built only from its control tables (Parhi, ch. 6:
// the folding transformation), compared with the unfolded DFG evaluated from zero state.
// Convention: cycle 0 is the first cycle after reset, in partition 0; registers load at the end of a cycle.
import {
  exactArithmetic,
  fixedArithmetic,
  decimalBits,
  randomStreams,
  applyOp,
  DEFAULT_FIXED,
  type Arithmetic,
  type FixedFormat,
} from './arith';
import { controlTables } from './control';
import { evaluateReference, resolveArithmetic } from './reference';
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
        result = ok ? applyOp(ar, slot.op, operands, slot.coefficientText ?? slot.coefficient) : null;
      }
      if (u.stages === 0) unitOut[i] = result;
      else pipes[i][cycle % u.stages] = result;
    }
    // End of the cycle: output ports and registers load together.
    for (const o of control.outputs) {
      if (o.cycle % N !== t || iteration < o.validAfterIterations) continue;
      strobes[o.node].push({ cycle: cycle + 1, value: read(o.source) });
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
  if (opts.arithmetic === 'fixed') return { report: compare(design, graph, control, fixedArithmetic(opts.fixed ?? DEFAULT_FIXED), opts), diagnostics: [] };
  return { report: compare(design, graph, control, exactArithmetic(), opts), diagnostics: [] };
}

function compare<T>(
  design: Design,
  graph: NonNullable<ReturnType<typeof resolveArithmetic>['graph']>,
  control: ControlTables,
  ar: Arithmetic<T>,
  opts: SimulationOptions,
): SimulationReport {
  const N = control.factor;
  const K = opts.iterations ?? DEFAULT_ITERATIONS;
  const seed = opts.seed ?? DEFAULT_SEED;
  // K samples of every output: the hardware runs until the output with the longest wait has shown K.
  const wait = control.outputs.reduce((m, o) => Math.max(m, Math.max(0, o.lag)), 0);
  const H = K + wait;
  const inputIds = design.nodes.filter((n) => n.kind === 'input').map((n) => n.id);
  const raw = randomStreams(inputIds, H, seed, inputBits(opts));
  const streams: Record<string, T[]> = {};
  for (const id of inputIds) streams[id] = raw[id].map((v) => ar.fromInt(v));

  let refIterations = H;
  for (const o of control.outputs) refIterations = Math.max(refIterations, o.firstSample + K);
  const maxBits = opts.maxBits ?? 4096;
  const guard = ar.name === 'exact' ? (v: T) => decimalBits(v as never) > maxBits : undefined;
  const ref = evaluateReference(design, graph, ar, streams, refIterations, guard);

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
  const run = runFolded(control, ar, streams, cycles);

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
  return {
    design: design.name,
    arithmetic: ar.name,
    fixed: ar.name === 'fixed' ? (opts.fixed ?? DEFAULT_FIXED) : null,
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
  };
}
