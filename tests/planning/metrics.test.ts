// The planner's multiplexer count (countMuxInputs, which every plan's muxInputs comes from)
// against the control tables themselves: the multiplexers `pleat simulate --tables` and
// `pleat rtl` build, whose folded simulation the sim tests compare with direct evaluation of the
// unfolded graph. Both placements are covered: the analysis's allocation table, and Pleat's own
// when the analysis carries none (large designs).
import { readFileSync, readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { analyzeDatapath } from '../../shared/analysis/analyze';
import { loadDesign } from '../../shared/design/load';
import { controlTables, countMuxInputs } from '../../shared/hardware/control';
import type { Design } from '../../shared/types';
import { randomDesign } from '../support/randomDesign';
import { generateDesign } from '../../scripts/gen-design.mjs';

const examples = fileURLToPath(new URL('../../examples/', import.meta.url));

/** Sum of the sources of every multiplexer of the tables, or null without tables. */
function tableCount(design: Design, maxAllocationCells?: number): number | null {
  const { analysis, datapath } = analyzeDatapath(design, maxAllocationCells === undefined ? {} : { maxAllocationCells });
  const { control } = controlTables(design, analysis, datapath, Infinity);
  return control ? control.muxes.reduce((s, m) => s + m.sources.length, 0) : null;
}

function counted(design: Design, maxAllocationCells?: number): number | null {
  const { analysis, datapath } = analyzeDatapath(design, maxAllocationCells === undefined ? {} : { maxAllocationCells });
  return countMuxInputs(design, analysis, datapath);
}

describe('countMuxInputs equals the sources of the control tables', () => {
  const designs: [string, Design][] = readdirSync(examples)
    .filter((f) => f.endsWith('.fold.yaml'))
    .map((f) => [f, loadDesign(readFileSync(examples + f, 'utf8')).design!]);
  for (let seed = 1; seed <= 40; seed++) designs.push([`random seed ${seed}`, randomDesign(seed, { maxOps: 10, maxSlack: 2, maxStages: 2, maxDelays: 3 })]);
  designs.push(['generated bank, 3,000 edges', loadDesign(generateDesign({ edges: 3000, seed: 3 }).text).design!]);

  it('with the analysis\'s allocation table and with Pleat\'s own placement', () => {
    let withTables = 0;
    for (const [name, d] of designs) {
      const tables = tableCount(d);
      expect(counted(d), name).toBe(tables);
      // no allocation table in the analysis: the tables place the registers themselves
      expect(counted(d, 0), `${name}, own placement`).toBe(tableCount(d, 0));
      if (tables !== null) withTables++;
    }
    expect(withTables).toBeGreaterThan(30);
  });
});
