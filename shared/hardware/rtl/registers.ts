// Step 5 of the RTL: the register file of the allocation, each register with a case on the
// partition saying what it loads at the end of it.
import type { ControlTables } from '../../types';
import type { RtlNames } from './interface';
import type { SignalReader, Timing } from './signals';

export function registerFile(control: ControlTables, n: RtlNames, timing: Timing, read: SignalReader, ce?: string): string[] {
  const N = control.factor;
  const { part, regName } = n;
  const { pconst } = timing;
  const regBlocks: string[] = [];
  if (control.registers === 0) return regBlocks;
  regBlocks.push(`  // Registers (${control.allocationSource === 'analysis' ? 'forward-backward allocation of the analysis' : 'allocation of the control tables'}): each loads at the end of the partitions listed.`);
  regBlocks.push(`  reg signed [W-1:0] ${regName.join(', ')};`);
  for (const rt of control.registerTables) {
    const r = regName[rt.register];
    const loads = rt.loads.map((l) => (l ? read.sig(l.source) : null));
    const every = loads.every((l) => l !== null);
    regBlocks.push('  always @(posedge clk) begin', `    if (rst) ${r} <= {W{1'b0}};`);
    if (N === 1) regBlocks.push(`    else${ce ? ` if (${ce})` : ''} ${r} <= ${loads[0] ?? r};`);
    else {
      const groups = new Map<string, number[]>();
      loads.forEach((v, t) => {
        if (v === null) return;
        if (!groups.has(v)) groups.set(v, []);
        groups.get(v)!.push(t);
      });
      regBlocks.push(ce ? `    else if (${ce}) begin` : '    else begin', `      case (${part})`);
      for (const [v, ts] of groups) regBlocks.push(`        ${ts.map(pconst).join(', ')}: ${r} <= ${v};`);
      regBlocks.push(`        default: ${r} <= ${every ? loads[0] : r};`, '      endcase', '    end');
    }
    regBlocks.push('  end');
  }
  regBlocks.push('');
  return regBlocks;
}
