// The shapes of a generated RTL bundle, shared by the steps that build it (docs/rtl.md).
import type { FixedFormat } from '../arith';

export interface RtlOptions {
  /** Default of the W parameter and of the testbench. */
  width?: number;
  /** Fractional bits of the quantised coefficients (fixed at generation). */
  coefFrac?: number;
  /** Header line naming the generator (e.g. with its version). */
  generator?: string;
  /** Top module name; default: the design name made a Verilog identifier. */
  topName?: string;
  /** `strobe` (default): the timed ports of docs/rtl.md; `stream`: valid/ready handshakes with a clock enable. */
  interface?: 'strobe' | 'stream';
}

export interface PortTiming {
  node: string;
  port: string;
  direction: 'input' | 'output';
  /** How the port is used, in one sentence of the cycle convention. */
  timing: string;
  /** Inputs: partition of a slotted input, null when held. Outputs: cycle (of the iteration) at whose end the port loads. */
  slot?: number | null;
  cycle?: number;
  lag?: number;
  firstSample?: number;
  /** Outputs: the cycle of the first valid strobe. */
  firstStrobeCycle?: number;
  /** Outputs: the name of the one-cycle valid strobe (`<port>_valid` unless that name was taken). */
  valid?: string;
  /** stream: the ready of the handshake (an input's output, an output's input). */
  ready?: string;
  /** stream: the serial port that carries this node's samples, and its place in the port's order. */
  serial?: string;
  serialIndex?: number;
}

/** A name of the interface that differs from the one the convention gives (docs/rtl.md). */
export interface RtlRename {
  /** `data`: the port of a node; `strobe`: an output's valid strobe; `module`: the top module. */
  role: 'data' | 'strobe' | 'module';
  /** The node (data, strobe) or the design name (module). */
  of: string;
  /** The name the convention gives: the id, `<port>_valid`, or the design name. */
  wanted: string;
  /** The name in the Verilog. */
  name: string;
  /** Why, in a few words. */
  reason: string;
}

export interface RtlBundle {
  top: string;
  /** Synthesizable sources, one module per file, the top first. */
  files: { name: string; text: string }[];
  ports: PortTiming[];
  /** Every interface name that is not the one the convention gives, with the reason. */
  renamed: RtlRename[];
  /** Name of the testbench module (and its file, `<testbench>.v`). */
  testbench: string;
  /** `text`: the decimal as written, when it has more digits than the double `value` keeps; quantised from it. */
  coefficients: { node: string; value: number; text?: string; quantised: string }[];
  fixed: FixedFormat;
  /** Width of the coefficient field (0 when the design has no coefficient). */
  coefWidth: number;
  factor: number;
  /** Present for `--interface stream` only (the strobe bundle is as it always was). */
  interface?: 'stream';
  /** stream: the start input and busy output. */
  start?: string;
  busy?: string;
  /** stream: the serial ports (docs/rtl.md, "Serial ports"), with their Verilog names and members in order. */
  serial?: { id: string; direction: 'input' | 'output'; port: string; valid: string; ready: string; nodes: string[] }[];
  /** Things an engineer should know about this netlist (e.g. a combinational loop through multiplexers). */
  warnings: string[];
}
