// The hardware summary of `pleat rtl --area` (`<top>.hardware.json`, docs/rtl.md "The hardware
// summary"): area and logic depth of the folded datapath and of its pipelined parallel reference,
// small enough to travel with an upload (designs[].hardware, docs/cli.md) and be kept per run and
// design by the server. One JSON Schema for the CLI that writes and attaches it and the server
// that stores it.
import { Ajv, type ValidateFunction } from 'ajv';

export const HARDWARE_SUMMARY_FORMAT = 'pleat-hardware';
export const HARDWARE_SUMMARY_VERSION = 1;

/** Figures of one synthesized side (generic cells of Yosys). */
export interface HardwareSide {
  /** Generic cells after synthesis, flip-flops included. */
  cells: number;
  /** Flip-flop bits. */
  flipFlops: number;
  /** Levels of generic cells on the longest path between flip-flops and ports (Yosys `ltp -noff`); null when the netlist has a combinational loop. */
  depth: number | null;
  /** Folding factor: cycles per sample. */
  factor: number;
}

export interface HardwareSummary {
  format: typeof HARDWARE_SUMMARY_FORMAT;
  version: typeof HARDWARE_SUMMARY_VERSION;
  /** The design's name (as in the report of `pleat check`) and its file as given to `pleat rtl`. */
  design: string;
  file: string;
  top: string;
  /** The synthesis tool and its version, e.g. "Yosys 0.23 (...)". */
  tool: string;
  /** What was compared, in the terms of docs/rtl.md. */
  compared: {
    /** Every operation of the parallel reference has the pipeline stages of its folded unit. */
    stages: 'folded' | 'none';
    /** `general`: every multiplier is synthesized with its coefficient as an input (the unit modules are synthesized before they are flattened). */
    multipliers: 'general';
    width: number;
    coefFrac: number;
  };
  folded: HardwareSide;
  parallel: HardwareSide;
}

const count = { type: 'integer', minimum: 0, maximum: 2_147_483_647 };
const side = {
  type: 'object',
  required: ['cells', 'flipFlops', 'depth', 'factor'],
  properties: {
    cells: count,
    flipFlops: count,
    depth: { anyOf: [count, { type: 'null' }] },
    factor: { type: 'integer', minimum: 1, maximum: 2_147_483_647 },
  },
};

/** The JSON Schema of a hardware summary; unknown fields pass (a later minor addition). */
export const hardwareSummarySchema = {
  type: 'object',
  required: ['format', 'version', 'design', 'file', 'top', 'tool', 'compared', 'folded', 'parallel'],
  properties: {
    format: { const: HARDWARE_SUMMARY_FORMAT },
    version: { const: HARDWARE_SUMMARY_VERSION },
    design: { type: 'string', minLength: 1, maxLength: 255 },
    file: { type: 'string', minLength: 1, maxLength: 1000 },
    top: { type: 'string', minLength: 1, maxLength: 255 },
    tool: { type: 'string', maxLength: 200 },
    compared: {
      type: 'object',
      required: ['stages', 'multipliers'],
      properties: {
        stages: { enum: ['folded', 'none'] },
        multipliers: { enum: ['general'] },
        width: { type: 'integer', minimum: 1, maximum: 4096 },
        coefFrac: { type: 'integer', minimum: 0, maximum: 4096 },
      },
    },
    folded: side,
    parallel: side,
  },
} as const;

let compiled: ValidateFunction | null = null;

/** Null when the value is a hardware summary; else the first problem, as "<pointer> <message>". */
export function hardwareSummaryProblem(value: unknown): string | null {
  compiled ??= new Ajv({ allErrors: true, strict: false }).compile(hardwareSummarySchema);
  if (compiled(value)) return null;
  const e = (compiled.errors ?? []).find((x) => x.keyword !== 'anyOf') ?? compiled.errors?.[0];
  if (!e) return 'is not a hardware summary';
  const allowed = (e.params as { allowedValue?: unknown }).allowedValue;
  return `${e.instancePath || '/'} ${e.message ?? 'is not valid'}${allowed !== undefined ? ` (${JSON.stringify(allowed)})` : ''}`;
}
