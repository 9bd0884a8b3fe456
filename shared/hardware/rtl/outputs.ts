// Step 6 of the RTL: the timing of every port (docs/rtl.md, "Timing of the interface") and the
// output registers with their one-cycle valid strobes.
import type { ControlTables } from '../../types';
import type { RtlNames } from './interface';
import { safe } from './names';
import type { SignalReader, Timing } from './signals';
import type { PortTiming } from './types';

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

export function outputRegisters(control: ControlTables, n: RtlNames, timing: Timing, read: SignalReader): { outBlocks: string[]; ports: PortTiming[] } {
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
    outBlocks.push(
      `  // Output ${safe(o.node)}: ${what}; hardware iteration l carries sample l${o.lag === 0 ? '' : o.lag > 0 ? ` - ${o.lag}` : ` + ${-o.lag}`}.`,
      '  always @(posedge clk) begin',
      `    if (rst) begin`,
      `      ${y} <= {W{1'b0}};`,
      `      ${v} <= 1'b0;`,
      `    end else if (${cond}) begin`,
      `      ${y} <= ${read.sig(o.source)};`,
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
