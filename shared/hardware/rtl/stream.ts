// The stream interface of the top module (docs/rtl.md, "The stream interface"): every input and
// output port gets a valid/ready handshake, and the whole datapath advances on one clock enable
// `pl_ce`: high when started, when every input's sample is there at the start of an iteration,
// and when no output would load over a sample its consumer has not taken.
import type { ControlTables } from '../../types';
import type { RtlNames } from './interface';
import type { StreamOutputs } from './outputs';
import type { Timing } from './signals';

export interface StreamParts {
  ce: string;
  start: string;
  busy: string;
  /** Input node -> what the datapath reads of it; its valid and ready ports. */
  inputSignal: Map<string, string>;
  inValid: Map<string, string>;
  inReady: Map<string, string>;
  outputs: StreamOutputs;
  portDecl: string[];
  /** Declarations before the datapath; the input buffers; the enable once the outputs are known. */
  early: string[];
  late: (outs: StreamOutputs) => string[];
}

export function streamParts(control: ControlTables, n: RtlNames, timing: Timing): StreamParts {
  const N = control.factor;
  const { names } = n;
  const inValid = new Map<string, string>();
  const inReady = new Map<string, string>();
  const ready = new Map<string, string>();
  for (const x of control.inputs) {
    const port = n.portOf.get(x.node)!;
    inValid.set(x.node, names.claim(`${port}_valid`, `the valid of input ${x.node}`));
    inReady.set(x.node, names.claim(`${port}_ready`, `the ready of input ${x.node}`));
  }
  for (const o of control.outputs) ready.set(o.node, names.claim(`${n.portOf.get(o.node)!}_ready`, `the ready of output ${o.node}`));
  const start = names.claim('start', 'the start input');
  const busy = names.claim('busy', 'the busy output');
  const ce = names.claim('pl_ce');
  const run = names.claim('pl_run');
  const atStart = N > 1 ? `(${n.part} == ${timing.pconst(0)})` : "1'b1";
  const inputSignal = new Map<string, string>();
  const early: string[] = [
    '  // Clock enable of the whole datapath (assigned below, once the outputs are known).',
    `  wire ${ce};`,
    `  // Started by ${start}; runs until reset.`,
    `  reg ${run};`,
    '  always @(posedge clk) begin',
    `    if (rst) ${run} <= 1'b0;`,
    `    else if (${start}) ${run} <= 1'b1;`,
    '  end',
    '',
  ];
  const have: string[] = [];
  for (const x of control.inputs) {
    const port = n.portOf.get(x.node)!;
    const buf = names.claim(`pl_buf_${port}`);
    const cur = names.claim(`pl_cur_${port}`);
    const h = names.claim(`pl_have_${port}`);
    const sig = names.claim(`pl_in_${port}`);
    inputSignal.set(x.node, sig);
    have.push(h);
    early.push(
      `  // Input ${port}: one sample waits in ${buf}; the iteration that starts takes it and keeps it in ${cur}.`,
      `  reg signed [W-1:0] ${buf}, ${cur};`,
      `  reg ${h};`,
      `  assign ${inReady.get(x.node)} = ~${h};`,
      '  always @(posedge clk) begin',
      '    if (rst) begin',
      `      ${buf} <= {W{1'b0}};`,
      `      ${cur} <= {W{1'b0}};`,
      `      ${h} <= 1'b0;`,
      '    end else begin',
      `      if (${inValid.get(x.node)} && ~${h}) begin`,
      `        ${buf} <= ${port};`,
      `        ${h} <= 1'b1;`,
      `      end else if (${ce} && ${atStart}) begin`,
      `        ${h} <= 1'b0;`,
      '      end',
      `      if (${ce} && ${atStart}) ${cur} <= ${buf};`,
      '    end',
      '  end',
      `  wire signed [W-1:0] ${sig} = ${atStart} ? ${buf} : ${cur};`,
      '',
    );
  }
  const inputsThere = have.length ? `(~${atStart} || (${have.join(' && ')}))` : "1'b1";
  const late = (outs: StreamOutputs): string[] => {
    const blocked = control.outputs
      .filter((o) => outs.loadCond.has(o.node))
      .map((o) => `(${outs.loadCond.get(o.node)} && ${n.validOf.get(o.node)} && ~${ready.get(o.node)})`);
    return [
      '  // The datapath advances when started, with the inputs of a new iteration there, and no output full.',
      `  assign ${ce} = ${run} && ${inputsThere}${blocked.length ? ` && ~(${blocked.join(' || ')})` : ''};`,
      `  // Busy while an iteration is under way or about to start.`,
      `  assign ${busy} = ${run} && (${N > 1 ? `~${atStart} || ` : ''}${have.length ? have.join(' && ') : "1'b1"});`,
      '',
    ];
  };
  const portDecl = [
    '  input  wire clk,',
    '  input  wire rst,',
    `  input  wire ${start},`,
    `  output wire ${busy},`,
    ...control.inputs.flatMap((x) => [
      `  input  wire signed [W-1:0] ${n.portOf.get(x.node)},`,
      `  input  wire ${inValid.get(x.node)},`,
      `  output wire ${inReady.get(x.node)},`,
    ]),
    ...control.outputs.flatMap((o) => [
      `  output reg  signed [W-1:0] ${n.portOf.get(o.node)},`,
      `  output reg  ${n.validOf.get(o.node)},`,
      `  input  wire ${ready.get(o.node)},`,
    ]),
  ];
  return { ce, start, busy, inputSignal, inValid, inReady, outputs: { ce, ready, loadCond: new Map() }, portDecl, early, late };
}
