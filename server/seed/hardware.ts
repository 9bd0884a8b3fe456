// Hardware summaries (pleat-hardware v1) for the demo history, so a new user sees the area and
// depth trends of the branch page. Not synthesized: Yosys is not run by the seed. The figures
// come from a rough cost model of our own over the design's checked schedule and registers, so
// they move with the history as real ones would: a higher folding factor costs wider
// multiplexers and more registers, a rotated folding set changes the register count, and the
// same design text always gets the same figures (synthesis is deterministic).
import { HARDWARE_SUMMARY_FORMAT, HARDWARE_SUMMARY_VERSION, type HardwareSummary } from '../../shared/report/hardwareSummary';
import type { DesignReport } from '../../shared/types';

const WIDTH = 16;
const COEF_FRAC = 14;
/** Generic cells and logic levels of one operation at 16 bits, by kind (invented, of the right order). */
const COST: Record<string, { cells: number; depth: number }> = {
  mul: { cells: 1130, depth: 41 },
  add: { cells: 94, depth: 17 },
};
const OTHER = { cells: 52, depth: 9 };
const log2 = (n: number) => Math.ceil(Math.log2(Math.max(n, 2)));

/** The summary `pleat rtl --area` could have written for the design; null when it has no feasible datapath. */
export function demoHardware(d: DesignReport, file: string, top: string): HardwareSummary | null {
  const n = d.factor;
  if (!d.registers || !d.schedule?.length || !n || !d.name) return null;
  let foldedCells = 0;
  let parallelCells = 0;
  let parallelStages = 0;
  let stageDepth = 0;
  for (const u of d.schedule) {
    const c = COST[u.kind] ?? OTHER;
    const ops = u.slots.filter((s) => s !== null).length;
    const stages = Math.max(u.stages, 1);
    // One shared unit fed by two N-way multiplexers, against one copy per operation.
    foldedCells += c.cells + 2 * WIDTH * (n - 1);
    parallelCells += ops * c.cells;
    parallelStages += ops * (stages - 1);
    stageDepth = Math.max(stageDepth, Math.ceil(c.depth / stages));
  }
  const foldedFlipFlops = WIDTH * d.registers.minimum + log2(n);
  const parallelFlipFlops = WIDTH * (parallelStages + d.registers.delayLines);
  return {
    format: HARDWARE_SUMMARY_FORMAT,
    version: HARDWARE_SUMMARY_VERSION,
    design: d.name,
    file,
    top,
    tool: 'demo estimate (not synthesized)',
    compared: { stages: 'folded', multipliers: 'general', width: WIDTH, coefFrac: COEF_FRAC },
    // The counter and its slot decoder grow with log2 N; the multiplexers add levels in front of a unit.
    folded: { cells: foldedCells + foldedFlipFlops + 6 * log2(n), flipFlops: foldedFlipFlops, depth: stageDepth + 2 * log2(n) + 2, factor: n },
    parallel: { cells: parallelCells + parallelFlipFlops, flipFlops: parallelFlipFlops, depth: stageDepth + 3, factor: 1 },
  };
}
