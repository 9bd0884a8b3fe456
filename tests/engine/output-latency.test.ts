// Latency of each output and the output that forces the outputs' shared retiming value
// (docs/analysis.md, "Latency of each output"). Expected values derived by hand from the folding
// equation D_F = N*w - P_U + v - u and the retiming constraints, as written in each comment
// (common practice, no outside source). The design is the load-cell smoother of docs/format.md
// (our own scenario).
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { designReport } from '../../shared/report/report';
import { runDesignText } from '../../shared/pipeline';
import { formatText } from '../../cli/format/text';
import type { Report } from '../../shared/types';

const doc = readFileSync(fileURLToPath(new URL('../../docs/format.md', import.meta.url)), 'utf8');
const start = doc.indexOf('```yaml\nformat: pleat/1\nname: load-cell-smoother');
const LOAD_CELL = doc.slice(start + 8, doc.indexOf('```', start + 8));

function analysed(text: string) {
  const r = loadDesign(text);
  expect(r.design, JSON.stringify(r.diagnostics)).not.toBeNull();
  return analyze(r.design!);
}

describe('latency of each output', () => {
  it('load-cell smoother: the slotted output forces the shared value, the tap does not wait for it', () => {
    // N = 4. ALU (1 stage): net in 1, blend in 2. MAC (2 stages): leak in 0, scale in 3.
    // scale -> blend: D_F = 4*0 - 2 + 2 - 3 = -3, so r(blend) - r(scale) >= ceil(3/4) = 1; r(blend) = 1.
    // blend -> weight (slot 3): D_F = 0 - 1 + 3 - 2 = 0; weight needs r(blend) - floor(0/4) = 1.
    // net -> raw is a tap: it needs r(net) - w = 0 - 0 = 0 and its samples lag by 0 (produced in
    // cycle 1 + 1 = 2). The outputs share r = 1, set by weight alone, 1 above raw's need of 0.
    // Another slot for weight cannot help (an earlier one makes D_F negative: need 2), nor a tap
    // (r(blend) - 0 = 1): only a blend that moves less lowers it.
    const a = analysed(LOAD_CELL);
    expect(a.outputLatency).toEqual({
      shared: 1,
      outputs: [
        { node: 'weight', mode: 'slot', cycle: 3, latency: 1, needs: 1 },
        { node: 'raw', mode: 'tap', cycle: 2, latency: 0, needs: 0 },
      ],
      forcedBy: { node: 'weight', by: 1, options: ['give blend (retimed by +1) a partition that needs less retiming: weight is lowered with it'] },
    });
  });

  it('with weight read in slot 0 it forces 2 iterations, and a tap or slot 3 would need 1', () => {
    // blend -> weight (slot 0): D_F = 0 - 1 + 0 - 2 = -3; weight needs 1 - floor(-3/4) = 2.
    // As a tap: r(blend) - w = 1. In slot t: 1 - floor((-3 + t)/4), 1 first at t = 3.
    const a = analysed(LOAD_CELL.replace('{ id: weight, kind: output, slot: 3 }', '{ id: weight, kind: output, slot: 0 }'));
    expect(a.retiming.latencyAdded).toBe(2);
    expect(a.outputLatency!.outputs.map((o) => [o.node, o.latency, o.needs])).toEqual([
      ['weight', 2, 2],
      ['raw', 0, 0],
    ]);
    expect(a.outputLatency!.forcedBy).toEqual({
      node: 'weight',
      by: 2,
      options: [
        'take weight as a tap (no slot): it would need 1',
        'read weight in slot 3: it would need 1',
        'give blend (retimed by +1) a partition that needs less retiming: weight is lowered with it',
      ],
    });
  });

  it('latency: fixed names no output as forcing, and the report carries outputLatency', () => {
    // A fixed latency ties the outputs to the inputs (r = 0): the need is reported, nothing is forced.
    const text = LOAD_CELL.replace('latency: free              # the default', 'latency: fixed');
    const a = analysed(text);
    if (a.retiming.feasible) expect(a.outputLatency!.forcedBy).toBeNull();
    const d = designReport({ file: 'x.fold.yaml', name: 'x', diagnostics: [], analysis: analysed(LOAD_CELL) });
    expect(d.outputLatency!.forcedBy!.node).toBe('weight');
  });

  it('the text report: a latency line per design and the forcing output in the block layout', () => {
    const run = runDesignText(LOAD_CELL.replace('{ id: weight, kind: output, slot: 3 }', '{ id: weight, kind: output, slot: 0 }'), 'load-cell.fold.yaml');
    const report = { format: 'pleat-report/1', tool: { name: 'pleat', version: '0' }, git: { branch: null, commit: null }, verdict: 'pass', rules: {}, designs: [run.report] } as unknown as Report;
    const text = formatText(report);
    expect(text).toMatch(/^ {2}latency {3}weight 2 \(slot 0\), raw 0 \(tap, cycle 2\)$/m);
    expect(text).toMatch(/^ {2}forced {4}weight sets the outputs' retiming to 2, 2 iterations above what the others need; to lower it: take weight as a tap \(no slot\): it would need 1; or read weight in slot 3/m);
  });
});
