// Step 3 of the RTL: the partition counter, and the iteration counter that holds back the valid
// strobes of outputs whose first samples come from before reset (docs/rtl.md, "Which sample").
import type { Timing } from './signals';

/** `ce`: the stream interface's clock enable; the counters then advance only when it is high. */
export function counterBlocks(N: number, part: string, iter: string, timing: Timing, ce?: string): string[] {
  const { PW, pconst, maxWait, IW } = timing;
  const body: string[] = [];
  if (N > 1) {
    body.push(
      `  // Partition counter: cycle c of an iteration runs partition c; it wraps after ${N - 1}.`,
      `  reg [${PW - 1}:0] ${part};`,
      '  always @(posedge clk) begin',
      `    if (rst) ${part} <= ${pconst(0)};`,
      ...(ce
        ? [`    else if (${ce}) ${part} <= (${part} == ${pconst(N - 1)}) ? ${pconst(0)} : ${part} + ${pconst(1)};`]
        : [`    else if (${part} == ${pconst(N - 1)}) ${part} <= ${pconst(0)};`, `    else ${part} <= ${part} + ${pconst(1)};`]),
      '  end',
      '',
    );
  }
  if (maxWait > 0) {
    const last = `${N > 1 ? ` && ${part} == ${pconst(N - 1)}` : ''}${ce ? ` && ${ce}` : ''}`;
    body.push(
      `  // Completed iterations, saturating at ${maxWait}: holds back valid strobes until the first real sample.`,
      `  reg [${IW - 1}:0] ${iter};`,
      '  always @(posedge clk) begin',
      `    if (rst) ${iter} <= ${IW}'d0;`,
      `    else if (${iter} != ${IW}'d${maxWait}${last}) ${iter} <= ${iter} + ${IW}'d1;`,
      '  end',
      '',
    );
  }
  return body;
}
