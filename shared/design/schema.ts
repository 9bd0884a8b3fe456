// Method: JSON Schema draft-07 (json-schema.org) of the design format pleat/1, for ajv and for editors.
// Convention: structure only; cross-references (ids, sets, loops) are checked in shared/design/validate.ts.

import { NODE_OPS } from './operations';

/** Largest integer accepted for counts such as delays, stages, ports and slots (32-bit signed). */
export const MAX_INT = 2_147_483_647;
/** Largest folding factor: no design within the node limit can fill more partitions per unit. */
export const MAX_FACTOR = 1_000_000;

const count = (description: string, min = 0) => ({
  type: 'integer',
  minimum: min,
  maximum: MAX_INT,
  description,
});

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
  required: ['format', 'name', 'units', 'nodes', 'edges', 'folding'],
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
      description: 'Short name of the design (letters, digits, `.`, `_`, `-`), unique within the repository.',
    },
    description: { type: 'string', description: 'Free text for people.' },
    clock_ns: {
      type: 'number',
      exclusiveMinimum: 0,
      description: 'Clock period of the folded hardware in nanoseconds; gives the sample period and rate.',
    },
    kinds: {
      type: 'object',
      description: 'Computation time of one operation of each kind in the unfolded graph.',
      additionalProperties: {
        type: 'object',
        required: ['time'],
        additionalProperties: false,
        properties: {
          time: { type: 'number', exclusiveMinimum: 0, description: 'Computation time in time units (> 0).' },
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
          stages: count('Pipeline stages of the unit (0 = combinational).'),
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
          time: { type: 'number', exclusiveMinimum: 0, description: 'Computation time of this node; overrides the time of its kind.' },
          slot: count('Inputs and outputs only: the time partition (0..N-1) at which the sample arrives or is read.'),
          coefficient: { type: 'number', description: 'Constant factor, for a `gain` node.' },
          op: {
            type: 'string',
            enum: [...NODE_OPS],
            description:
              'Arithmetic for simulation: add, sub (first port minus the others), mul, gain (input times coefficient), neg, pass. Default: derived from the kind.',
          },
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
          delays: { ...count('Number of delay elements (registers) on the edge.'), default: 0 },
          port: count('Operand position at the consumer, for non-commutative operations (0 = first).'),
        },
      },
    },
    folding: {
      type: 'object',
      required: ['factor', 'sets'],
      additionalProperties: false,
      description: 'The folding plan.',
      properties: {
        factor: {
          type: 'integer',
          minimum: 1,
          maximum: MAX_FACTOR,
          description: 'Folding factor N: clock cycles per iteration.',
        },
        sets: {
          type: 'object',
          description: 'Unit id -> node ids by time partition 0..N-1; null (~) leaves a partition idle.',
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
