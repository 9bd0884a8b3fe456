// The stream interface of the top module (docs/rtl.md, "The stream interface"): every input and
// output port gets a valid/ready handshake, and the whole datapath advances on one clock enable
// `pl_ce`: high when started, when every input's sample is there at the start of an iteration,
// and when no output would load over a sample its consumer has not taken.
import type { ControlTables, SerialPort } from '../../types';
import type { RtlNames } from './interface';
import { boundedIdent, verilogIdent } from './names';
import { indexWidth } from './serial';
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
  /** Serial ports (docs/rtl.md, "Serial ports"): their Verilog names and members, in file order. */
  serial: SerialParts[];
}

export interface SerialParts {
  id: string;
  direction: 'input' | 'output';
  port: string;
  valid: string;
  ready: string;
  /** Member nodes in the order the port moves them. */
  nodes: string[];
}

export function streamParts(control: ControlTables, n: RtlNames, timing: Timing, serialPorts: readonly SerialPort[] = []): StreamParts {
  const N = control.factor;
  const { names } = n;
  const inValid = new Map<string, string>();
  const inReady = new Map<string, string>();
  const ready = new Map<string, string>();
  // A member of a serial port has no handshake of its own: the port's valid and ready stand for it.
  const serial: SerialParts[] = serialPorts.map((p) => {
    const port = names.claim(boundedIdent(verilogIdent(p.id)), `serial port ${p.id}`);
    return {
      id: p.id,
      direction: p.direction,
      port,
      valid: names.claim(`${port}_valid`, `the valid of serial port ${p.id}`),
      ready: names.claim(`${port}_ready`, `the ready of serial port ${p.id}`),
      nodes: p.nodes,
    };
  });
  const memberOf = new Map<string, { sp: SerialParts; k: number; idx: string; iw: number }>();
  serialPorts.forEach((p, i) => {
    const sp = serial[i];
    const idx = names.claim(`pl_sidx_${sp.port}`);
    p.nodes.forEach((node, k) => memberOf.set(node, { sp, k, idx, iw: indexWidth(p) }));
  });
  for (const x of control.inputs) {
    const port = n.portOf.get(x.node)!;
    const m = memberOf.get(x.node);
    inValid.set(x.node, m ? m.sp.valid : names.claim(`${port}_valid`, `the valid of input ${x.node}`));
    inReady.set(x.node, m ? m.sp.ready : names.claim(`${port}_ready`, `the ready of input ${x.node}`));
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
  const haveOf = new Map<string, string>();
  for (const x of control.inputs) {
    const port = n.portOf.get(x.node)!;
    const buf = names.claim(`pl_buf_${port}`);
    const cur = names.claim(`pl_cur_${port}`);
    const h = names.claim(`pl_have_${port}`);
    const sig = names.claim(`pl_in_${port}`);
    inputSignal.set(x.node, sig);
    have.push(h);
    haveOf.set(x.node, h);
    const m = memberOf.get(x.node);
    // A serial member takes the port's sample when the port's index points at it.
    const take = m ? `${m.sp.valid} && ${m.idx} == ${m.iw}'d${m.k} && ~${h}` : `${inValid.get(x.node)} && ~${h}`;
    early.push(
      m
        ? `  // Input ${port}: sample ${m.k} of each set on serial port ${m.sp.port} waits in ${buf}; the iteration that starts takes it and keeps it in ${cur}.`
        : `  // Input ${port}: one sample waits in ${buf}; the iteration that starts takes it and keeps it in ${cur}.`,
      `  reg signed [W-1:0] ${buf}, ${cur};`,
      `  reg ${h};`,
      ...(m ? [] : [`  assign ${inReady.get(x.node)} = ~${h};`]),
      '  always @(posedge clk) begin',
      '    if (rst) begin',
      `      ${buf} <= {W{1'b0}};`,
      `      ${cur} <= {W{1'b0}};`,
      `      ${h} <= 1'b0;`,
      '    end else begin',
      `      if (${take}) begin`,
      `        ${buf} <= ${m ? m.sp.port : port};`,
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
  for (const sp of serial) {
    const { idx, iw } = memberOf.get(sp.nodes[0])!;
    const last = `${iw}'d${sp.nodes.length - 1}`;
    const at = (k: number) => `${idx} == ${iw}'d${k}`;
    const step = [
      '  always @(posedge clk) begin',
      `    if (rst) ${idx} <= ${iw}'d0;`,
      `    else if (${sp.valid} && ${sp.ready}) ${idx} <= (${idx} == ${last}) ? ${iw}'d0 : ${idx} + ${iw}'d1;`,
      '  end',
    ];
    if (sp.direction === 'input') {
      early.push(
        `  // Serial port ${sp.port}: ${sp.nodes.map((x) => n.portOf.get(x)!).join(', ')} in turn; ${idx} says whose sample comes next.`,
        `  reg [${iw - 1}:0] ${idx};`,
        `  assign ${sp.ready} = ${sp.nodes.map((x, k) => `(${at(k)} && ~${haveOf.get(x)})`).join(' || ')};`,
        ...step,
        '',
      );
    } else {
      const ports = sp.nodes.map((x) => n.portOf.get(x)!);
      early.push(
        `  // Serial port ${sp.port}: the samples of ${ports.join(', ')} leave in turn; ${idx} says whose is next.`,
        `  reg [${iw - 1}:0] ${idx};`,
        ...sp.nodes.flatMap((x, k) => [
          `  reg signed [W-1:0] ${ports[k]};`,
          `  reg ${n.validOf.get(x)!};`,
          `  wire ${ready.get(x)!} = ${sp.ready} && ${at(k)};`,
        ]),
        `  assign ${sp.port} = ${sp.nodes.slice(0, -1).map((_, k) => `(${at(k)}) ? ${ports[k]} : `).join('')}${ports[ports.length - 1]};`,
        `  assign ${sp.valid} = ${sp.nodes.map((x, k) => `(${at(k)} && ${n.validOf.get(x)!})`).join(' || ')};`,
        ...step,
        '',
      );
    }
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
    ...control.inputs.filter((x) => !memberOf.has(x.node)).flatMap((x) => [
      `  input  wire signed [W-1:0] ${n.portOf.get(x.node)},`,
      `  input  wire ${inValid.get(x.node)},`,
      `  output wire ${inReady.get(x.node)},`,
    ]),
    ...serial.filter((sp) => sp.direction === 'input').flatMap((sp) => [`  input  wire signed [W-1:0] ${sp.port},`, `  input  wire ${sp.valid},`, `  output wire ${sp.ready},`]),
    ...control.outputs.filter((o) => !memberOf.has(o.node)).flatMap((o) => [
      `  output reg  signed [W-1:0] ${n.portOf.get(o.node)},`,
      `  output reg  ${n.validOf.get(o.node)},`,
      `  input  wire ${ready.get(o.node)},`,
    ]),
    ...serial.filter((sp) => sp.direction === 'output').flatMap((sp) => [`  output wire signed [W-1:0] ${sp.port},`, `  output wire ${sp.valid},`, `  input  wire ${sp.ready},`]),
  ];
  return { ce, start, busy, inputSignal, inValid, inReady, outputs: { ce, ready, loadCond: new Map() }, portDecl, early, late, serial };
}
