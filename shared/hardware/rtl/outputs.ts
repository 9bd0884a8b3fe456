// Step 6 of the RTL: the timing of every port (docs/rtl.md, "Timing of the interface") and the
// output registers with their one-cycle valid strobes.
import type { ControlTables } from '../../types';
import type { RtlNames } from './interface';
import { safe } from './names';
import type { SignalReader, Timing } from './signals';
import type { PortTiming } from './types';
import type { SignalFormat } from '../formats';
import { requantiseLines } from './requantise';

/** With number formats: an output requantises its producer's value (of `fromFrac` fraction bits) to its own format. */
/** The stream interface: clock enable, each output's ready port and its load condition (filled in here). */
export interface StreamOutputs {
  ce: string;
  ready: Map<string, string>;
  /** Output node -> the condition under which it loads, for the stall logic. */
  loadCond: Map<string, string>;
}

export type OutputQuantOf = (node: string) => { fromFrac: number; sf: SignalFormat } | undefined;

export function inputTimings(control: ControlTables, n: RtlNames): PortTiming[] {
  const N = control.factor;
  return control.inputs.map((x) => ({
    node: x.node,
    port: n.portOf.get(x.node)!,
    direction: 'input',
    slot: x.slot,
    timing:
      x.slot === null
        ? `held: drive sample l during all of cycles ${N}l .. ${N}l+${N - 1}`
        : `slot ${x.slot}: drive sample l during cycle ${N}l+${x.slot}; other cycles are ignored`,
  }));
}

export function outputRegisters(
  control: ControlTables,
  n: RtlNames,
  timing: Timing,
  read: SignalReader,
  quantOf?: OutputQuantOf,
  W = 0,
  stream?: StreamOutputs,
): { outBlocks: string[]; ports: PortTiming[] } {
  const N = control.factor;
  const { part, iter } = n;
  const { pconst, IW } = timing;
  const outBlocks: string[] = [];
  const ports: PortTiming[] = [];
  for (const o of control.outputs) {
    const y = n.portOf.get(o.node)!;
    const v = n.validOf.get(o.node)!;
    const conds: string[] = [];
    if (N > 1) conds.push(`${part} == ${pconst(o.cycle % N)}`);
    if (o.validAfterIterations > 0) conds.push(`${iter} >= ${IW}'d${o.validAfterIterations}`);
    const cond = conds.length ? conds.join(' && ') : "1'b1";
    const firstStrobe = N * Math.max(0, o.lag) + o.cycle + 1;
    const what =
      o.mode === 'slot' ? `read in partition ${o.cycle}` : o.mode === 'tap' ? `taken when produced (cycle ${o.cycle} of the iteration)` : 'fed by no edge: always 0';
    let value = read.sig(o.source);
    const q = o.mode === 'none' ? undefined : quantOf?.(o.node);
    const comment = `  // Output ${safe(o.node)}: ${what}; hardware iteration l carries sample l${o.lag === 0 ? '' : o.lag > 0 ? ` - ${o.lag}` : ` + ${-o.lag}`}.`;
    if (q) {
      const base = n.names.claim(`pl_oq_${y}`);
      const out = n.names.claim(`${base}_y`);
      outBlocks.push(comment, '  // verilator lint_off UNUSEDSIGNAL', ...requantiseLines(base, value, W, q.fromFrac, q.sf, W, out), '  // verilator lint_on UNUSEDSIGNAL');
      value = out;
    } else outBlocks.push(comment);
    if (stream) {
      // The port holds its sample until it is taken: valid stays high until ready; a load into
      // a full port stalls the whole datapath (the clock enable), so no sample is lost.
      const rdy = stream.ready.get(o.node)!;
      stream.loadCond.set(o.node, cond);
      outBlocks.push(
        '  always @(posedge clk) begin',
        `    if (rst) begin`,
        `      ${y} <= {W{1'b0}};`,
        `      ${v} <= 1'b0;`,
        `    end else if (${stream.ce} && ${cond}) begin`,
        `      ${y} <= ${value};`,
        `      ${v} <= 1'b1;`,
        `    end else if (${rdy}) begin`,
        `      ${v} <= 1'b0;`,
        '    end',
        '  end',
        '',
      );
      ports.push({
        node: o.node,
        port: y,
        direction: 'output',
        cycle: o.cycle,
        lag: o.lag,
        firstSample: o.firstSample,
        valid: v,
        ready: rdy,
        timing: `stream: ${y} shows sample ${o.firstSample} + k while ${v} is high, until a cycle with ${rdy} high takes it`,
      });
      continue;
    }
    outBlocks.push(
      '  always @(posedge clk) begin',
      `    if (rst) begin`,
      `      ${y} <= {W{1'b0}};`,
      `      ${v} <= 1'b0;`,
      `    end else if (${cond}) begin`,
      `      ${y} <= ${value};`,
      `      ${v} <= 1'b1;`,
      `    end else begin`,
      `      ${v} <= 1'b0;`,
      '    end',
      '  end',
      '',
    );
    ports.push({
      node: o.node,
      port: y,
      direction: 'output',
      cycle: o.cycle,
      lag: o.lag,
      firstSample: o.firstSample,
      firstStrobeCycle: firstStrobe,
      valid: v,
      timing: `${v} is high during cycle ${firstStrobe} + ${N}k and ${y} then shows sample ${o.firstSample} + k, held until the next strobe`,
    });
  }
  return { outBlocks, ports };
}
