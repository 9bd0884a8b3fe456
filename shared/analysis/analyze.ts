// Method: runs every analysis of the folding methods (docs/engine.md) on one validated design.
// Convention: the datapath is the retimed one when retiming was needed and exists, else the original.
import { outputLatency } from './outputLatency';
import type { Analysis, Design, EdgeResult, ScheduleRow } from '../types';
import { buildGraph, type IndexedGraph } from './graph';
import { asNullable, foldedDelays } from './foldedDelay';
import { retime, retimedDelays } from './retiming';
import { registerCounts } from './registers';
import { allocateRegisters } from './allocation';
import { utilization } from './utilization';
import { factorLowerBound, iterationBound, loopStructure } from './iterationBound';

export interface AnalyzeOptions {
  /** Largest allocation table (partitions x registers) the result may carry; default 200,000 (a report's: 20,000, shared/pipeline.ts). */
  maxAllocationCells?: number;
  /**
   * false: never retime (the rule `negative_delays: fail`): the datapath is the one as written,
   * so a plan with negative folded delays has no register count. Default true.
   */
  retime?: boolean;
}

export const METHOD_NOT_APPLIED = 'not applied: the rule negative_delays: fail forbids retiming, so the plan is judged as written';

export const DEFAULT_MAX_ALLOCATION_CELLS = 200_000;

/**
 * The folded datapath the analysis settled on, in the engine's indexed form, so that later stages
 * (control tables, simulation, RTL) reuse it instead of rebuilding graph and delays.
 */
export interface FoldedDatapath {
  graph: IndexedGraph;
  /** Delays per edge of the final datapath (retimed when retiming was needed). */
  delays: Float64Array;
  /** Folded delay per edge of the final datapath (NaN for taps). */
  folded: Float64Array;
}

export function analyze(design: Design, options: AnalyzeOptions = {}): Analysis {
  return analyzeDatapath(design, options).analysis;
}

/** The analysis and, when a feasible folded datapath exists, that datapath. */
export function analyzeDatapath(design: Design, options: AnalyzeOptions = {}): { analysis: Analysis; datapath: FoldedDatapath | null } {
  const maxCells = options.maxAllocationCells ?? DEFAULT_MAX_ALLOCATION_CELLS;
  const g = buildGraph(design);
  const N = g.factor;
  const folded = foldedDelays(g);
  const outcome = retime(g, folded, design.folding.latency ?? 'free');
  let { result: retiming, nodeRetiming } = outcome;
  const notApplied = options.retime === false && retiming.needed && retiming.feasible;
  if (notApplied) {
    retiming = { ...retiming, values: {}, latencyAdded: 0, method: METHOD_NOT_APPLIED, applied: false };
    nodeRetiming = null;
  }

  // The delays the folded datapath uses: retimed when a retiming was needed and exists.
  let finalDelays = g.edgeDelays;
  let finalFolded = folded;
  if (retiming.needed && nodeRetiming) {
    finalDelays = retimedDelays(g, nodeRetiming);
    finalFolded = foldedDelays(g, finalDelays);
  }

  const edges: EdgeResult[] = new Array(g.edgeCount);
  for (let e = 0; e < g.edgeCount; e++) {
    edges[e] = {
      from: design.edges[e].from,
      to: design.edges[e].to,
      delays: g.edgeDelays[e],
      foldedDelay: asNullable(folded[e]),
      retimedDelays: finalDelays[e],
      retimedFoldedDelay: asNullable(finalFolded[e]),
    };
  }

  let registers: Analysis['registers'] = null;
  let lifetimes: Analysis['lifetimes'] = null;
  let allocation: Analysis['allocation'] = null;
  let allocationOmitted: string | undefined;
  if (retiming.feasible && !notApplied) {
    const counts = registerCounts(g, finalFolded, finalDelays);
    registers = counts.registers;
    lifetimes = counts.lifetimes;
    const cells = N * registers.minimum;
    if (cells > maxCells) {
      // A report's limit is lower than the analysis' own: say where the whole table is made.
      const elsewhere = maxCells < DEFAULT_MAX_ALLOCATION_CELLS && cells <= DEFAULT_MAX_ALLOCATION_CELLS;
      allocationOmitted = `the allocation table would have ${N} partitions x ${registers.minimum} registers = ${cells} cells, more than the limit of ${maxCells}${
        elsewhere ? ` for a report; 'pleat simulate' and 'pleat rtl' allocate up to ${DEFAULT_MAX_ALLOCATION_CELLS} cells` : ''
      }`;
    } else {
      allocation = allocateRegisters(lifetimes, registers.minimum);
    }
  } else if (notApplied) {
    allocationOmitted = 'no folded datapath as written: it has negative folded delays, and negative_delays: fail forbids the retiming that removes them';
  } else {
    allocationOmitted = 'no feasible folded datapath: retiming cannot remove the negative folded delays';
  }

  const loops = loopStructure(g);
  const samplePeriodNs = design.clockNs !== undefined && design.clockNs !== null ? N * design.clockNs : null;
  const result: Analysis = {
    factor: N,
    edges,
    retiming,
    utilization: utilization(g),
    registers,
    lifetimes,
    allocation,
    iterationBound: iterationBound(design, g, loops),
    factorLowerBound: factorLowerBound(g, loops),
    schedule: schedule(design, g),
    samplePeriodNs,
    sampleRateMHz: samplePeriodNs !== null ? 1000 / samplePeriodNs : null,
  };
  if (allocationOmitted !== undefined) result.allocationOmitted = allocationOmitted;
  if (retiming.feasible && !notApplied) {
    const lat = outputLatency(g, folded, retiming.needed ? nodeRetiming : null, design.folding.latency ?? 'free');
    if (lat) result.outputLatency = lat;
  }
  return { analysis: result, datapath: retiming.feasible && !notApplied ? { graph: g, delays: finalDelays, folded: finalFolded } : null };
}

/** One row per unit in file order: the node it runs in each partition, padded to N with null. */
export function schedule(design: Design, g: IndexedGraph): ScheduleRow[] {
  return design.units.map((unit) => {
    const set = design.folding.sets[unit.id] ?? [];
    const slots = new Array<string | null>(g.factor).fill(null);
    for (let p = 0; p < set.length && p < g.factor; p++) slots[p] = set[p] ?? null;
    return { unit: unit.id, kind: unit.kind, stages: unit.stages, slots };
  });
}
