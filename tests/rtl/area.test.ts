// Logic depth and area as `pleat rtl --area` measures them (cli/rtl/area.ts), run in the real
// Yosys on tiny circuits whose depth is known in kind. Yosys is installed by
// scripts/ensure-hdl-tools.sh; the checks are relations (more adders, no shallower path;
// registers cut paths), common practice of static timing, no source: Yosys restructures adder
// chains into trees, so no exact level count is claimed.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execa } from 'execa';
import { parseYosysLtp, synthesize, type AreaFigures } from '../../cli/rtl/area';

const ROOT = path.resolve(__dirname, '../..');
const temps: string[] = [];

beforeAll(async () => {
  const r = await execa('bash', [path.join(ROOT, 'scripts/ensure-hdl-tools.sh')], { reject: false, all: true });
  if (r.exitCode !== 0) throw new Error(`the area tests need Yosys, and scripts/ensure-hdl-tools.sh could not install it:\n${r.all}`);
  const w = await execa('sh', ['-c', 'command -v yosys'], { reject: false });
  if (w.exitCode !== 0) throw new Error('yosys is not on the PATH after scripts/ensure-hdl-tools.sh');
}, 600_000);

afterAll(() => {
  for (const d of temps) rmSync(d, { recursive: true, force: true });
});

/** A chain of k 8-bit adders, each adding its own input; `registered`: a register after every adder. */
function chain(k: number, registered: boolean): AreaFigures {
  const top = `chain${k}${registered ? 'r' : ''}`;
  const lines = [`module ${top}(input clk, input [7:0] a, input [${8 * k - 1}:0] b, output reg [7:0] y);`];
  if (registered) {
    lines.push(`  reg [7:0] s [0:${k - 1}];`, '  integer i;', '  always @(posedge clk) begin', '    s[0] <= a + b[7:0];');
    lines.push(`    for (i = 1; i < ${k}; i = i + 1) s[i] <= s[i-1] + b[8*i +: 8];`, `    y <= s[${k - 1}];`, '  end');
  } else {
    let e = 'a';
    for (let i = 0; i < k; i++) e = `(${e} + b[${8 * i + 7}:${8 * i}])`;
    lines.push(`  always @(posedge clk) y <= ${e};`);
  }
  lines.push('endmodule', '');
  const dir = mkdtempSync(path.join(tmpdir(), 'pleat-area-test-'));
  temps.push(dir);
  writeFileSync(path.join(dir, `${top}.v`), lines.join('\n'));
  return synthesize({ top, files: [`${top}.v`], dir });
}

describe('logic depth by Yosys ltp', () => {
  it('a chain of adders is no shallower with more adders, and deeper with many more', () => {
    const depths = [1, 2, 4, 8].map((k) => chain(k, false).depth!);
    for (const d of depths) expect(d).toBeGreaterThan(0);
    for (let i = 1; i < depths.length; i++) expect(depths[i], `k=${2 ** i}: ${depths}`).toBeGreaterThanOrEqual(depths[i - 1]!);
    expect(depths[3]).toBeGreaterThan(depths[0]!);
  }, 120_000);

  it('a register after every adder keeps the depth of one adder, whatever the length', () => {
    const one = chain(1, false).depth!;
    const r4 = chain(4, true);
    const r8 = chain(8, true);
    expect(r4.depth).toBe(r8.depth);
    // One adder between registers: at most the depth of the single-adder circuit.
    expect(r8.depth!).toBeLessThanOrEqual(one);
    // And the registers are there: 8 bits per stage plus the output.
    expect(r8.registers).toBe(8 * 8 + 8);
    expect(chain(8, false).depth!).toBeGreaterThan(r8.depth!);
  }, 120_000);

  it('reads a loop as no depth', () => {
    expect(parseYosysLtp('Warning: Detected loop at $abc$1$n in m\nLongest topological path in m (length=6):')).toBeNull();
    expect(parseYosysLtp('Longest topological path in m (length=12):')).toBe(12);
  });
});
