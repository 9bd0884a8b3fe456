// What the steps of the RTL share: the partition counter's constants, the signal a source of the
// control tables names (remembering which were read), and the choice of a value by partition.
import type { ControlTables, SignalSource } from '../../types';
import type { RtlNames } from './interface';
import { bitsFor } from './names';

export interface Timing {
  /** Width of the partition counter and a constant of that width. */
  PW: number;
  pconst: (t: number) => string;
  /** Most iterations an output holds back its strobes, and the iteration counter's width. */
  maxWait: number;
  IW: number;
}

export function counterTiming(control: ControlTables): Timing {
  const PW = bitsFor(control.factor - 1);
  const maxWait = control.outputs.reduce((m, o) => Math.max(m, o.validAfterIterations), 0);
  return { PW, pconst: (t: number) => `${PW}'d${t}`, maxWait, IW: bitsFor(maxWait) };
}

/** The Verilog signal of a source; every name handed out is remembered as read. */
export class SignalReader {
  readonly used = new Set<string>();
  /** stream: what the datapath reads of an input (its buffered sample), by node. */
  constructor(
    private readonly n: RtlNames,
    private readonly inputSignal?: Map<string, string>,
  ) {}
  sig(s: SignalSource): string {
    let name: string;
    switch (s.kind) {
      case 'unit':
        name = this.n.unitSig.get(s.unit)!.y;
        break;
      case 'input':
        name = this.inputSignal?.get(s.node) ?? this.n.portOf.get(s.node)!;
        break;
      case 'register':
        name = this.n.regName[s.register];
        break;
      case 'zero':
        return '{W{1\'b0}}';
    }
    this.used.add(name);
    return name;
  }
}

/**
 * A choice by partition: a wire when one value serves every partition, else a case on the
 * counter. `falseLoop` scopes Verilator's UNOPTFLAT waiver to the declaration.
 */
export function byPartition(part: string, pconst: (t: number) => string) {
  return (type: string, target: string, values: (string | null)[], idle: string, falseLoop = false): string[] => {
    const distinct = [...new Set(values.filter((v): v is string => v !== null))];
    let lines: string[];
    if (distinct.length <= 1) lines = [`  wire ${type} ${target} = ${distinct[0] ?? idle};`];
    else {
      const groups = new Map<string, number[]>();
      values.forEach((v, t) => {
        if (v === null) return;
        if (!groups.has(v)) groups.set(v, []);
        groups.get(v)!.push(t);
      });
      lines = [`  reg ${type} ${target};`, '  always @* begin', `    case (${part})`];
      for (const [v, ts] of groups) lines.push(`      ${ts.map(pconst).join(', ')}: ${target} = ${v};`);
      lines.push(`      default: ${target} = ${idle};`, '    endcase', '  end');
    }
    if (falseLoop) {
      lines[0] = `  /* verilator lint_off UNOPTFLAT */\n${lines[0]}\n  /* verilator lint_on UNOPTFLAT */`;
    }
    return lines;
  };
}

export type PartitionChoice = ReturnType<typeof byPartition>;
