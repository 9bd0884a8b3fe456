// Method: JSON Schema draft-07 (json-schema.org) of the design format pleat/1, for ajv and for editors.
// Convention: structure only; cross-references (ids, sets, loops) are checked in shared/design/validate.ts.

import { NODE_OPS } from './operations';
import { FORMAT_PATTERN, OVERFLOW_MODES, ROUNDING_MODES } from './numberFormat';

/** Largest integer accepted for counts such as delays, stages, ports and slots (32-bit signed). */
export const MAX_INT = 2_147_483_647;
/** Longest design name: it names files, Verilog modules and a server column (docs/diagnostics.md). */
export const MAX_NAME = 200;
/** Largest folding factor: no design within the node limit can fill more partitions per unit. */
export const MAX_FACTOR = 1_000_000;

/**
 * Deepest pipeline of one unit. Real cores have tens to a few hundred stages; 10,000 is far past
 * any of them and keeps every cycle count of the analysis small and exact (docs/diagnostics.md).
 */
export const MAX_STAGES = 10_000;
/**
 * Most delays on one edge. A million samples of delay is a memory, not a line of registers, and
 * the folded datapath holds every delay as a register (docs/diagnostics.md).
 */
export const MAX_DELAYS = 1_000_000;

/**
 * Computation times and the clock period: positive, finite, and within bounds no design leaves
 * (a femtosecond to a second of clock; a millionth to a million time units), so that sample
 * periods, rates and iteration bounds are finite numbers (docs/diagnostics.md).
 */
export const MIN_TIME = 1e-6;
export const MAX_TIME = 1e6;
export const MIN_CLOCK_NS = 1e-6;
export const MAX_CLOCK_NS = 1e9;

const count = (description: string, min = 0, max = MAX_INT) => ({
  type: 'integer',
  minimum: min,
  maximum: max,
  description,
});

const numberFormat = (description: string) => ({ type: 'string', pattern: FORMAT_PATTERN, description });
const rounding = { type: 'string', enum: [...ROUNDING_MODES], description: 'How a result drops fraction bits: truncate (toward minus infinity), round-half-up, convergent (half to even).' };
const overflow = { type: 'string', enum: [...OVERFLOW_MODES], description: 'What a result past its format does: wrap (two\'s complement) or saturate.' };

const id = (description: string) => ({
  type: 'string',
  minLength: 1,
  // `__proto__` cannot be a key of a plain JavaScript object; refuse it rather than corrupt maps.
  not: { const: '__proto__' },
  description,
});

export const designSchema = {
  $schema: 'http://json-schema.org/draft-07/schema#',
  title: 'Pleat design (format pleat/1)',
  description:
    'A data-flow graph of a DSP datapath, the shared hardware units it is folded onto, and the folding plan. File name: *.fold.yaml.',
  type: 'object',
  // `folding` may be left out, and `folding.sets` too: such a file asks for a plan (`pleat plan`);
  // `pleat check` reports it as `plan-incomplete` (shared/design/validate.ts).
  required: ['format', 'name', 'units', 'nodes', 'edges'],
  additionalProperties: false,
  properties: {
    format: {
      type: 'string',
      const: 'pleat/1',
      description: 'Version of the design format. This tool reads `pleat/1`.',
    },
    name: {
      type: 'string',
      pattern: '^[A-Za-z0-9._-]+$',
      // A name becomes a file and module name (docs/rtl.md) and a column of the server: 200 fits both.
      maxLength: MAX_NAME,
      description: `Short name of the design (letters, digits, \`.\`, \`_\`, \`-\`; at most ${MAX_NAME} characters), unique within the repository.`,
    },
    description: { type: 'string', description: 'Free text for people.' },
    clock_ns: {
      type: 'number',
      minimum: MIN_CLOCK_NS,
      maximum: MAX_CLOCK_NS,
      description: 'Clock period of the folded hardware in nanoseconds; gives the sample period and rate.',
    },
    fixed_point: {
      type: 'object',
      additionalProperties: false,
      description: 'Defaults of the number formats of simulation and RTL; without it every signal is Q(W-1).0 (W = --width), truncate, wrap.',
      properties: {
        format: numberFormat('Default format of every signal in Q notation: Qm.n signed (m integer bits, n fraction bits, and a sign bit), UQm.n unsigned.'),
        rounding,
        overflow,
      },
    },
    kinds: {
      type: 'object',
      description: 'Computation time of one operation of each kind in the unfolded graph.',
      additionalProperties: {
        type: 'object',
        required: ['time'],
        additionalProperties: false,
        properties: {
          time: { type: 'number', minimum: MIN_TIME, maximum: MAX_TIME, description: `Computation time in time units (${MIN_TIME} to ${MAX_TIME}).` },
        },
      },
    },
    units: {
      type: 'array',
      description: 'The shared hardware units. Each unit executes the nodes of its folding set.',
      items: {
        type: 'object',
        required: ['id', 'kind', 'stages'],
        additionalProperties: false,
        properties: {
          id: id('Unit id, unique among units and nodes.'),
          kind: {
            type: 'string',
            minLength: 1,
            not: { enum: ['input', 'output'] },
            description: 'Operation kind this unit executes (e.g. add, mul). `input` and `output` are reserved for boundary nodes.',
          },
          stages: count(`Pipeline stages of the unit (0 = combinational; at most ${MAX_STAGES}).`, 0, MAX_STAGES),
        },
      },
    },
    nodes: {
      type: 'array',
      description: 'The nodes of the data-flow graph.',
      items: {
        type: 'object',
        required: ['id', 'kind'],
        additionalProperties: false,
        properties: {
          id: id('Node id, unique among units and nodes.'),
          kind: {
            type: 'string',
            minLength: 1,
            examples: ['input', 'output', 'add', 'mul'],
            description: '`input`, `output`, or an operation kind that some unit has.',
          },
          time: { type: 'number', minimum: MIN_TIME, maximum: MAX_TIME, description: `Computation time of this node (${MIN_TIME} to ${MAX_TIME}); overrides the time of its kind.` },
          slot: count('Inputs and outputs only: the time partition (0..N-1) at which the sample arrives or is read.'),
          coefficient: { type: 'number', description: 'Constant factor, for a `gain` node.' },
          op: {
            type: 'string',
            enum: [...NODE_OPS],
            description:
              'Arithmetic for simulation: add, sub (first port minus the others), mul, gain (input times coefficient), neg, pass. Default: derived from the kind.',
          },
          format: numberFormat('Fixed-point format of this signal in Q notation (Q3.12, UQ1.15); default: fixed_point.format.'),
          rounding,
          overflow,
        },
      },
    },
    edges: {
      type: 'array',
      description: 'Directed edges of the data-flow graph.',
      items: {
        type: 'object',
        required: ['from', 'to'],
        additionalProperties: false,
        properties: {
          from: { type: 'string', minLength: 1, description: 'Id of the node that produces the value.' },
          to: { type: 'string', minLength: 1, description: 'Id of the node that consumes the value.' },
          delays: { ...count(`Number of delay elements (registers) on the edge (at most ${MAX_DELAYS}).`, 0, MAX_DELAYS), default: 0 },
          port: count('Operand position at the consumer, for non-commutative operations (0 = first).'),
        },
      },
    },
    serial: {
      type: 'array',
      description: 'Serial ports of the stream interface (`pleat rtl --interface stream`): several inputs, or several outputs, that share one port and move one sample per handshake in the order listed.',
      items: {
        type: 'object',
        required: ['id'],
        additionalProperties: false,
        properties: {
          id: id('Name of the shared port; unique among units, nodes and serial ports.'),
          inputs: { type: 'array', items: { type: 'string', minLength: 1 }, description: 'Input nodes whose samples arrive on this port, in this order, one set per iteration.' },
          outputs: { type: 'array', items: { type: 'string', minLength: 1 }, description: 'Output nodes whose samples leave on this port, in this order, one set per iteration.' },
        },
      },
    },
    folding: {
      type: 'object',
      required: ['factor'],
      additionalProperties: false,
      description: 'The folding plan. Without `sets` (or with operations left out of them) the file asks `pleat plan` to place them.',
      properties: {
        factor: {
          type: 'integer',
          minimum: 1,
          maximum: MAX_FACTOR,
          description: 'Folding factor N: clock cycles per iteration.',
        },
        sets: {
          type: 'object',
          description: 'Unit id -> node ids by time partition 0..N-1; null (~) leaves a partition idle. Operations left out are placed by `pleat plan`; those written here are kept (pins).',
          additionalProperties: {
            type: 'array',
            items: { type: ['string', 'null'], description: 'Node id, or null for an idle partition.' },
          },
        },
        latency: {
          type: 'string',
          enum: ['free', 'fixed'],
          default: 'free',
          description: '`free`: retiming may add latency between inputs and outputs; `fixed`: it may not.',
        },
      },
    },
  },
} as const;
