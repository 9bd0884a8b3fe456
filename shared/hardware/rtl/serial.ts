// Serial ports of the stream interface (docs/rtl.md, "Serial ports"): several inputs or several
// outputs share one valid/ready port and move one sample per handshake in the declared order.
import type { ControlTables, Design, OutputControl, SerialPort } from '../../types';
import { bitsFor } from './names';

/** The serial ports that carry outputs, with the members' output controls in port order. */
function outputGroups(design: Design, control: ControlTables): OutputControl[][] {
  const byNode = new Map(control.outputs.map((o) => [o.node, o]));
  return (design.serial ?? []).filter((p) => p.direction === 'output').map((p) => p.nodes.map((id) => byNode.get(id)!));
}

/**
 * The output controls with the members of each serial output port started together. A member
 * loads its j-th sample at enabled cycle f + jN; the port takes them in the declared order, so
 * a member whose first load came a whole iteration before another's would have to load its
 * second sample before its first could leave, and the datapath would wait forever. So every
 * member starts at the first iteration whose load lies within N cycles before the latest
 * member's first load: then each member's next load comes after every member's current one.
 * Samples skipped at the start are counted in `firstSample` (the testbench expects the same).
 */
export function alignSerialOutputs(design: Design, control: ControlTables): ControlTables {
  const groups = outputGroups(design, control);
  if (!groups.length) return control;
  const N = control.factor;
  const moved = new Map<string, OutputControl>();
  for (const g of groups) {
    const firstLoad = (o: OutputControl) => N * o.validAfterIterations + (o.cycle % N);
    const latest = g.reduce((m, o) => Math.max(m, firstLoad(o)), 0);
    for (const o of g) {
      let va = o.validAfterIterations;
      while (N * va + (o.cycle % N) < latest - N + 1) va++;
      moved.set(o.node, { ...o, validAfterIterations: va, firstSample: o.firstSample + (va - o.validAfterIterations) });
    }
  }
  return { ...control, outputs: control.outputs.map((o) => moved.get(o.node) ?? o) };
}

/** Width of the index that says which member a serial port moves next. */
export function indexWidth(p: SerialPort): number {
  return bitsFor(Math.max(1, p.nodes.length - 1));
}
