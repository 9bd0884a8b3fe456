// Plain data shared by the engine, the CLI, the server and the web report.
// Nothing here does I/O; every type is JSON-serialisable.
import type { HardwareSummary } from './report/hardwareSummary';

/** A problem found in a design file or a config file. Line and column are 1-based. */
export interface Diagnostic {
  severity: 'error' | 'warning';
  /** Stable code, listed in shared/design/diagnostics.ts and docs/diagnostics.md. */
  code: string;
  message: string;
  line: number | null;
  column: number | null;
  /** Path of the offending value inside the document, e.g. ['edges', 3, 'from']. */
  path?: (string | number)[];
}

// ---------------------------------------------------------------- design (format pleat/1)

export type NodeOp = 'add' | 'sub' | 'mul' | 'gain' | 'neg' | 'pass';

export interface Unit {
  id: string;
  kind: string;
  stages: number;
}

export interface DfgNode {
  id: string;
  /** 'input', 'output', or an operation kind that some unit has. */
  kind: string;
  time?: number;
  slot?: number;
  coefficient?: number;
  /**
   * The coefficient's decimal as written in the file, kept only when it has more digits than
   * the nearest double (`coefficient`) keeps; simulation and RTL compute with this exact text.
   */
  coefficientText?: string;
  op?: NodeOp;
  /** Fixed-point format in Q notation (`Q3.12`, `UQ1.15`); the design's default when absent (docs/format.md). */
  format?: string;
  /** How the node's result drops fraction bits, and what it does past its format's range. */
  rounding?: 'truncate' | 'round-half-up' | 'convergent';
  overflow?: 'wrap' | 'saturate';
}

/** The design's defaults for number formats (`fixed_point:` of the file). */
export interface FixedPointDefaults {
  format?: string;
  rounding?: 'truncate' | 'round-half-up' | 'convergent';
  overflow?: 'wrap' | 'saturate';
}

export interface Edge {
  from: string;
  to: string;
  /** Always present after loading (default 0). */
  delays: number;
  port?: number;
}

export interface Folding {
  factor: number;
  /** unit id -> node id (or null = idle) per time partition; lists may be shorter than N. */
  sets: Record<string, (string | null)[]>;
  latency: 'free' | 'fixed';
}

/** A loaded, validated design: defaults filled in, order of the file kept. */
export interface Design {
  format: 'pleat/1';
  name: string;
  description?: string;
  clockNs?: number;
  kinds: Record<string, { time: number }>;
  units: Unit[];
  nodes: DfgNode[];
  edges: Edge[];
  folding: Folding;
  /** Defaults of the number formats; absent: every signal Q(W-1).0 with W = --width, truncate, wrap. */
  fixedPoint?: FixedPointDefaults;
  /** Serial ports of the stream interface (docs/format.md, "Serial ports"), in file order; absent when none. */
  serial?: SerialPort[];
}

/** Inputs or outputs sharing one port of the stream interface, one sample per handshake in `nodes` order. */
export interface SerialPort {
  id: string;
  direction: 'input' | 'output';
  nodes: string[];
}

export interface LoadResult {
  /** null when any error diagnostic was found. */
  design: Design | null;
  diagnostics: Diagnostic[];
}

// ---------------------------------------------------------------- analysis results

export interface EdgeResult {
  from: string;
  to: string;
  delays: number;
  /** null for a tap into an output without slot. */
  foldedDelay: number | null;
  retimedDelays: number;
  retimedFoldedDelay: number | null;
  /** Where the edge is written (1-based), given to the edges a report points at: negative folded delays and the blocking loop. */
  line?: number | null;
  column?: number | null;
}

/** One edge of a loop that makes retiming impossible, in DFG terms. */
export interface ConflictEdge {
  from: string;
  to: string;
  delays: number;
  foldedDelay: number | null;
  /** True when the step goes through the shared boundary (inputs or outputs tied together). */
  viaBoundary?: boolean;
  /** Where the edge is written (1-based), once the pipeline placed it; absent for a boundary step. */
  line?: number | null;
  column?: number | null;
}

export interface RetimingConflict {
  /** The DFG loop (or input-to-output path tied by the boundary rule) whose constraints cannot all hold. */
  edges: ConflictEdge[];
  /** Sum of delays and of pipeline stages on the loop. */
  loopDelays: number;
  loopStages: number;
  /** Smallest folding factor this loop allows: ceil(loopStages / loopDelays); null if loopDelays = 0. */
  minFactor: number | null;
  /** Edges of the loop whose folded delay is negative: the positions that conflict. */
  conflictingEdges: { from: string; to: string; foldedDelay: number }[];
  /** What would fix it, in words an engineer can act on. */
  suggestions: string[];
}

export interface RetimingResult {
  needed: boolean;
  feasible: boolean;
  /** Every node when feasible (inputs normalised to 0); {} when not. */
  values: Record<string, number>;
  /** r(outputs) - r(inputs): iterations of latency that retiming adds. */
  latencyAdded: number;
  conflict: RetimingConflict | null;
  /** Which of the valid solutions is reported, in one sentence. */
  method?: string;
  /**
   * false when a retiming is needed but the rules forbid it (`negative_delays: fail`): nothing is
   * retimed, values are empty and the datapath is the one as written. Absent otherwise.
   */
  applied?: false;
  /**
   * false when a search for the fewest registers ran out of its work budget, so the retiming
   * reported is not proven to need the fewest registers (the method sentence says so too).
   * Absent when every search finished: its optimum is exact.
   */
  registersProven?: false;
}

export interface Utilization {
  overall: number;
  units: Record<string, number>;
}

export interface Registers {
  perEdge: number;
  delayLines: number;
  minimum: number;
}

/** One variable of lifetime analysis: produced at tIn, last used at tOut (absolute cycles of iteration 0). */
export interface Lifetime {
  /** Variable name: the producing node id, or `input->consumer` for a held input. */
  variable: string;
  node: string;
  tIn: number;
  tOut: number;
}

export interface LifetimeChart {
  factor: number;
  variables: Lifetime[];
  /** live[t] for t in 0..N-1 in the periodic steady state. */
  live: number[];
}

/** Forward-backward allocation in the periodic steady state: one row per partition 0..N-1. */
export interface Allocation {
  registers: number;
  factor: number;
  /** 'forward-backward' or a documented fallback. */
  method: string;
  /**
   * cells[t][k]: the variable held by register k during partition t (steady state), or null.
   * A variable instance is written `name` or `name@j` when it is j iterations old (j >= 1).
   */
  cells: (string | null)[][];
  /** Register transfers: at the end of partition `cycle`, `from` (register index or 'unit') loads register `to`. */
  moves: { cycle: number; variable: string; from: number | 'unit'; to: number }[];
}

export interface IterationBound {
  /** numerator / denominator, reduced; value is its float. */
  value: number;
  numerator: number;
  denominator: number;
  /** Node ids of the critical loop, in order along the edges. */
  loop: string[];
}

/** The schedule: which node each unit runs in each partition. */
export interface ScheduleRow {
  unit: string;
  kind: string;
  stages: number;
  slots: (string | null)[];
}

export interface Analysis {
  factor: number;
  edges: EdgeResult[];
  retiming: RetimingResult;
  utilization: Utilization;
  /** null when no feasible folded datapath exists. */
  registers: Registers | null;
  lifetimes: LifetimeChart | null;
  /** null when no feasible datapath exists or the table would be too large (see allocationOmitted). */
  allocation: Allocation | null;
  allocationOmitted?: string;
  /** null for a DFG without loops. */
  iterationBound: IterationBound | null;
  factorLowerBound: number;
  schedule: ScheduleRow[];
  samplePeriodNs: number | null;
  sampleRateMHz: number | null;
  /** Control tables of the folded datapath (shared/hardware/control.ts); absent when not computed, null when no feasible datapath exists. */
  control?: ControlTables | null;
  /** Why `control` was left out of a report (too large), when it was. */
  controlOmitted?: string;
  /** Latency of each output and what forces the outputs' shared retiming (docs/analysis.md); absent without a feasible datapath or a fed output. */
  outputLatency?: OutputLatencyReport;
}

/** One output's latency: its samples lag the inputs by `latency` iterations; alone it would need `needs`. */
export interface OutputLatency {
  node: string;
  mode: 'slot' | 'tap';
  /** Cycle of the iteration at whose end it is read (a slot), or in which its producer delivers (a tap; may exceed N-1). */
  cycle: number;
  /** Iterations its samples lag the inputs: r(outputs) for a slot, r(producer) - w(e) for a tap. */
  latency: number;
  /** The least r(o) its edge allows with the operations' retiming as chosen. */
  needs: number;
}

export interface OutputLatencyReport {
  /** r(outputs) - r(inputs): the one retiming value all outputs share (latencyAdded). */
  shared: number;
  outputs: OutputLatency[];
  /** The output that alone sets the shared value, the iterations it adds over the others' needs, and what would lower it; null when none does. */
  forcedBy: { node: string; by: number; options: string[] } | null;
}

// ---------------------------------------------------------------- rules and report

export type NegativeDelayPolicy = 'fail' | 'retime' | 'warn';

export interface Rules {
  negative_delays?: NegativeDelayPolicy;
  min_utilization?: number;
  min_unit_utilization?: number;
  max_registers?: number;
}

export type RuleName = keyof Rules;

/**
 * Rules that `pleat simulate` gates on (docs/rtl.md, "Fixed point"); `pleat check` does not
 * simulate, so they are accepted in every rules mapping but judged by simulate alone.
 */
export interface SimulationRules {
  /** Most fixed-point overflows a run may have. */
  max_overflows?: number;
  /** Lowest signal-to-quantisation-noise ratio of any output of a fixed-point run, in dB. */
  min_sqnr_db?: number;
}
export type SimulationRuleName = keyof SimulationRules;
export type RuleSource = 'team' | 'repository' | 'default';

/** The rules in force for one check, each with where it came from. */
export type EffectiveRules = { [K in RuleName]?: { value: Required<Rules>[K]; source: RuleSource } };

export interface Violation {
  rule: RuleName;
  source: RuleSource;
  limit: number | string;
  actual: number | string;
  message: string;
  /** For min_unit_utilization: the unit that falls short. */
  unit?: string;
  /** Where in the design file to look (document path, and its 1-based position once placed). */
  path?: (string | number)[];
  line?: number | null;
  column?: number | null;
}

export type Status = 'pass' | 'fail' | 'error';

export interface DesignReport extends Partial<Analysis> {
  file: string;
  name: string | null;
  status: Status;
  diagnostics: Diagnostic[];
  violations: Violation[];
  /** Only in an upload (`--hardware-summary`, docs/cli.md): the summary of `pleat rtl --area`. */
  hardware?: HardwareSummary | null;
}

export interface Report {
  format: 'pleat-report/1';
  tool: { name: 'pleat'; version: string };
  /** Where the run comes from. `message` (first line) and `author` (name) of the commit are optional: older CLIs omit them. */
  git: {
    branch: string | null;
    commit: string | null;
    baseBranch?: string | null;
    baseCommit?: string | null;
    message?: string | null;
    author?: string | null;
  };
  verdict: Status;
  rules: EffectiveRules;
  designs: DesignReport[];
}

// ---------------------------------------------------------------- control tables of the folded datapath

/** Where a multiplexer input or a register load takes its value from. */
export type SignalSource =
  | { kind: 'unit'; unit: string }
  | { kind: 'input'; node: string }
  | { kind: 'register'; register: number }
  | { kind: 'zero' };

/** What one unit executes in one partition. */
export interface UnitSlot {
  node: string;
  /** null when the design gives the node no arithmetic (simulation and RTL then refuse it). */
  op: NodeOp | null;
  /** Number of operands the node takes. */
  arity: number;
  coefficient: number | null;
  /** The coefficient's exact decimal text when the double `coefficient` is not exactly it. */
  coefficientText?: string;
}

export interface UnitControl {
  unit: string;
  kind: string;
  stages: number;
  /** Operand ports of the unit: the largest arity among its operations. */
  ports: number;
  /** Per partition 0..N-1: the operation started in that partition, or null (idle). */
  partitions: (UnitSlot | null)[];
}

/** The multiplexer in front of one operand port of a unit. */
export interface MuxTable {
  unit: string;
  port: number;
  /** The multiplexer inputs; its size is sources.length. */
  sources: SignalSource[];
  /** Per partition: index into sources, or null when the port is not read. */
  select: (number | null)[];
  /** Per partition: the DFG edge read (producer -> consumer) and the variable instance, or null. */
  reads: ({ from: string; to: string; variable: string | null } | null)[];
}

/** One register of the allocation: what it loads at the end of which partition. */
export interface RegisterTable {
  register: number;
  /** Per partition: the load at the end of that partition, or null (the register holds). */
  loads: ({ source: SignalSource; variable: string } | null)[];
  /** Per partition: the variable instance held during that partition (`name` or `name@age`), or null. */
  holds: (string | null)[];
}

/** How an output port is fed and when it presents a sample. */
export interface OutputControl {
  node: string;
  /** 'slot': read at its partition; 'tap': taken when produced; 'none': no edge feeds it. */
  mode: 'slot' | 'tap' | 'none';
  source: SignalSource;
  /** Cycle of the iteration (may exceed N-1 for taps) at whose end the port loads: its partition is cycle mod N. */
  cycle: number;
  /** The port of hardware iteration l carries sample l - lag of the unfolded output. */
  lag: number;
  /** Index of the first sample that gets a valid strobe (samples before it are zero by the zero-state argument). */
  firstSample: number;
  /** Completed iterations the partition counter must have seen before the first valid strobe. */
  validAfterIterations: number;
}

export interface InputControl {
  node: string;
  /** Partition at which a new sample is valid for one cycle; null: held for the whole iteration. */
  slot: number | null;
}

export interface ControlTables {
  factor: number;
  registers: number;
  /** 'analysis': the allocation table of the analysis; 'control': Pleat's own fallback allocation (see note). */
  allocationSource: 'analysis' | 'control';
  allocationNote?: string;
  /** r(outputs) - r(inputs): iterations of latency that retiming adds. */
  latencyAdded: number;
  inputs: InputControl[];
  units: UnitControl[];
  muxes: MuxTable[];
  registerTables: RegisterTable[];
  outputs: OutputControl[];
}
