// Method: retiming for folding (Parhi 1999, ch. 6) as difference constraints, by shortest paths, then fewest registers by min-cost flow.
// Convention: inputs share one value, outputs one (the same with fixed latency); inputs reported as 0.
import type { ConflictEdge, RetimingConflict, RetimingResult } from '../types';
import { NO_SLOT, OPERATION, shortestPathsFromAll, type IndexedGraph } from './graph';
import { foldedDelays, hasNegative } from './foldedDelay';
import { registerFigures } from './registers';
import { retimingConstraints, satisfiesConstraints, type ConstraintGraph, type Latency, type RetimingVariables } from './constraints';
import { MAX_FANOUT_EDGES, MAX_MIN_REGISTER_EDGES, minRegisterRetiming, SearchArrays, type RegisterObjective } from './minRegisterRetiming';

export interface RetimingOutcome {
  result: RetimingResult;
  /** Retiming of every node (shared values for boundary nodes); null when infeasible. */
  nodeRetiming: Float64Array | null;
}

export const METHOD_NOT_NEEDED = 'not needed: no folded delay is negative, every node keeps 0';
export const METHOD_SHORTEST_PATHS =
  'shortest paths from a virtual source (Bellman-Ford with subtree disassembly): each node moves only as far as the constraints force, then all values are shifted so that the inputs have 0';
export const METHOD_SHORTEST_PATHS_NO_INPUTS =
  'shortest paths from a virtual source (Bellman-Ford with subtree disassembly): each node moves only as far as the constraints force, then all values are shifted so that the smallest is 0 (the design has no input)';
export const METHOD_INFEASIBLE = 'shortest paths found a negative cycle in the constraints: no retiming exists';

/** Solves the retiming for folding when some folded delay is negative (docs/engine.md: which solution). */
export function retime(
  g: IndexedGraph,
  folded: Float64Array,
  latency: Latency,
  options: RetimeOptions = {},
): RetimingOutcome {
  if (!hasNegative(folded)) {
    const values: Record<string, number> = {};
    for (let i = 0; i < g.nodeCount; i++) values[g.nodeIds[i]] = 0;
    return {
      result: { needed: false, feasible: true, values, latencyAdded: 0, conflict: null, method: METHOD_NOT_NEEDED },
      nodeRetiming: new Float64Array(g.nodeCount),
    };
  }
  const cg = retimingConstraints(g, folded, latency);
  const { vars } = cg;
  const sp = shortestPathsFromAll(vars.count, cg.arcFrom, cg.arcTo, cg.weight);
  if (sp.cycle) {
    return {
      result: {
        needed: true,
        feasible: false,
        values: {},
        latencyAdded: 0,
        conflict: describeConflict(g, folded, latency, sp.cycle),
        method: METHOD_INFEASIBLE,
      },
      nodeRetiming: null,
    };
  }
  const shortest = Float64Array.from(sp.dist as Float64Array);
  const spMethod = vars.hasInputs ? METHOD_SHORTEST_PATHS : METHOD_SHORTEST_PATHS_NO_INPUTS;
  if (options.minimiseRegisters === false) return feasibleOutcome(g, vars, shortest, spMethod);
  const choice = chooseRetiming(g, folded, cg, shortest, options.maxEdges ?? MAX_MIN_REGISTER_EDGES, options.budget);
  const method = choice.objective ? minRegisterMethod(choice.objective, vars.hasInputs) : spMethod;
  const outcome = feasibleOutcome(g, vars, choice.values, `${method}; ${choice.why}`);
  if (choice.proven === false) outcome.result.registersProven = false;
  return outcome;
}

export interface RetimeOptions {
  /** false: report the shortest-path solution without searching for fewer registers. */
  minimiseRegisters?: boolean;
  /** Largest design (edges) searched for fewer registers; default MAX_MIN_REGISTER_EDGES. */
  maxEdges?: number;
  /** Work budget of each fewest-register search (minRegisterRetiming); default grows with the design. */
  budget?: number;
}

/** Method sentence of a fewest-register retiming; starts with 'minimum-cost flow'. */
export function minRegisterMethod(objective: RegisterObjective, hasInputs: boolean): string {
  const what =
    objective === 'edges'
      ? 'the smallest sum of retimed folded delays'
      : 'the smallest sum over nodes of the largest retimed folded delay leaving each (fan-out mirror nodes)';
  return `minimum-cost flow (dual of the difference constraints): the retiming with ${what}, then all values are shifted so that ${
    hasInputs ? 'the inputs have 0' : 'the smallest is 0 (the design has no input)'
  }`;
}

/** One feasible retiming of the constraint variables, scored the way the report counts registers. */
interface Candidate {
  objective?: RegisterObjective;
  values: Float64Array;
  minimum: number;
  perEdge: number;
  latency: number;
}

/**
 * The shortest-path solution always stands. Fewest-register candidates (two objectives; latency
 * capped at the shortest-path latency, and with free latency also uncapped) replace it only when
 * they pass an explicit check of every constraint, need no more per-edge registers, and rank
 * better by lifetime minimum, then latency added, then per-edge registers. Big designs keep the
 * shortest-path solution.
 */
function chooseRetiming(
  g: IndexedGraph,
  folded: Float64Array,
  cg: ConstraintGraph,
  shortest: Float64Array,
  maxEdges: number,
  budget?: number,
): { values: Float64Array; objective?: RegisterObjective; why: string; proven?: boolean } {
  const { vars } = cg;
  if (g.edgeCount > maxEdges) {
    return {
      values: shortest,
      why: `the search for fewer registers was skipped because the design has ${g.edgeCount} edges, more than ${maxEdges}`,
    };
  }
  const score = (values: Float64Array): Candidate | null => {
    if (!satisfiesConstraints(cg, values)) return null;
    const r = nodeValues(g, vars, values);
    const delays = retimedDelays(g, r);
    const counts = registerFigures(g, foldedDelays(g, delays), delays);
    const lat = vars.hasInputs && vars.hasOutputs ? values[vars.outputVar] - values[vars.inputVar] : 0;
    return { values, minimum: counts.minimum, perEdge: counts.perEdge, latency: lat };
  };
  const base = score(shortest) as Candidate;
  const twoBoundaries = vars.hasInputs && vars.hasOutputs && vars.inputVar !== vars.outputVar;
  let best = base;
  let tried = 0;
  let outOfBudget = 0;
  const objectives: RegisterObjective[] = g.edgeCount <= MAX_FANOUT_EDGES ? ['edges', 'fanout'] : ['edges'];
  // One set of search arrays for all the searches, sized for the largest (the fan-out objective
  // adds a mirror variable per node and a mirror arc per edge); it goes with this call.
  const arrays = new SearchArrays(vars.count + g.nodeCount, 2 * cg.arcFrom.length + 1);
  const consider = (objective: RegisterObjective, values: Float64Array) => {
    tried++;
    const c = score(values);
    if (c) c.objective = objective;
    // The fan-out objective may trade per-edge registers for fewer live ones: never above the
    // shortest-path solution's per-edge count, so neither count gets worse.
    if (c && c.perEdge <= base.perEdge && better(c, best)) best = c;
  };
  for (const objective of objectives) {
    // Free latency first (it may add latency when that saves registers); when its optimum adds
    // no more latency than the shortest paths, it is also the optimum under that cap.
    const free = minRegisterRetiming(g, cg, folded, shortest, { objective, budget, arrays });
    if (!free) outOfBudget++;
    else consider(objective, free.values);
    if (!twoBoundaries) continue;
    if (free && free.values[vars.outputVar] - free.values[vars.inputVar] <= base.latency) continue;
    const capped = minRegisterRetiming(g, cg, folded, shortest, { maxLatency: base.latency, objective, budget, arrays });
    if (!capped) outOfBudget++;
    else consider(objective, capped.values);
  }
  const unproven = outOfBudget > 0 ? `; not proven to be the fewest registers: ${outOfBudget} of the searches ran out of their work budget` : '';
  if (tried === 0) {
    return {
      values: shortest,
      proven: false,
      why: 'the search for fewer registers ran out of its work budget, so the shortest-path solution is kept and the fewest registers are not proven',
    };
  }
  if (best === base) {
    return {
      values: shortest,
      proven: !unproven,
      why: `the fewest-register retiming (minimum-cost flow) needs no fewer registers (lifetime minimum ${base.minimum}), so the shortest-path solution is kept${unproven}`,
    };
  }
  return {
    values: best.values,
    objective: best.objective,
    proven: !unproven,
    why: `chosen over the shortest-path solution because it needs ${best.minimum} registers by lifetime analysis against ${base.minimum}${
      twoBoundaries ? `, with ${best.latency} iteration(s) of latency added against ${base.latency}` : ''
    } and ${best.perEdge} per-edge registers against ${base.perEdge}${unproven}`,
  };
}

/** Lifetime minimum first, then latency added, then per-edge registers; ties keep the incumbent. */
function better(a: Candidate, b: Candidate): boolean {
  if (a.minimum !== b.minimum) return a.minimum < b.minimum;
  if (a.latency !== b.latency) return a.latency < b.latency;
  return a.perEdge < b.perEdge;
}

/** Values of the variables spread over the nodes, normalised (inputs 0, else smallest 0). */
function nodeValues(g: IndexedGraph, vars: RetimingVariables, dist: Float64Array): Float64Array {
  let shift: number;
  if (vars.hasInputs) shift = dist[vars.inputVar];
  else {
    shift = Infinity;
    for (let i = 0; i < g.nodeCount; i++) shift = Math.min(shift, dist[vars.varOf[i]]);
    if (shift === Infinity) shift = 0;
  }
  const r = new Float64Array(g.nodeCount);
  for (let i = 0; i < g.nodeCount; i++) r[i] = dist[vars.varOf[i]] - shift + 0; // + 0 turns -0 into 0
  return r;
}

function feasibleOutcome(g: IndexedGraph, vars: RetimingVariables, dist: Float64Array, method: string): RetimingOutcome {
  const nodeRetiming = nodeValues(g, vars, dist);
  const values: Record<string, number> = {};
  for (let i = 0; i < g.nodeCount; i++) values[g.nodeIds[i]] = nodeRetiming[i];
  const latencyAdded =
    vars.hasInputs && vars.hasOutputs ? dist[vars.outputVar] - dist[vars.inputVar] + 0 : 0;
  return {
    result: { needed: true, feasible: true, values, latencyAdded, conflict: null, method },
    nodeRetiming,
  };
}

/** w_r(e) = w(e) + r(V) - r(U) for every edge. */
export function retimedDelays(g: IndexedGraph, r: Float64Array): Float64Array {
  const out = new Float64Array(g.edgeCount);
  for (let e = 0; e < g.edgeCount; e++) out[e] = g.edgeDelays[e] + r[g.edgeTo[e]] - r[g.edgeFrom[e]];
  return out;
}

/**
 * Turns a negative cycle of the constraint graph back into a DFG loop. Constraint arcs are
 * reversed DFG edges, so the loop is the cycle read backwards; where two consecutive edges meet
 * at different boundary nodes (tied by the shared input/output value), a viaBoundary step is
 * inserted.
 */
export function describeConflict(
  g: IndexedGraph,
  folded: Float64Array,
  latency: Latency,
  cycleArcs: number[],
): RetimingConflict {
  const loop = cycleArcs.slice().reverse(); // arc index = DFG edge index
  // Start after a boundary step if there is one, so the loop reads input ... output; else at
  // the edge that comes first in the file.
  let first = 0;
  for (let k = 0; k < loop.length; k++) {
    const prevEdge = loop[(k + loop.length - 1) % loop.length];
    if (g.edgeTo[prevEdge] !== g.edgeFrom[loop[k]]) {
      first = k;
      break;
    }
    if (loop[k] < loop[first]) first = k;
  }
  const ordered = loop.slice(first).concat(loop.slice(0, first));

  const edges: ConflictEdge[] = [];
  const conflictingEdges: RetimingConflict['conflictingEdges'] = [];
  let loopDelays = 0;
  let loopStages = 0;
  let viaBoundary = false;
  const units = new Set<number>();
  const movable = new Set<string>();
  let movableBoundary = false;
  for (let k = 0; k < ordered.length; k++) {
    const e = ordered[k];
    const from = g.nodeIds[g.edgeFrom[e]];
    const to = g.nodeIds[g.edgeTo[e]];
    const d = folded[e];
    edges.push({ from, to, delays: g.edgeDelays[e], foldedDelay: Number.isNaN(d) ? null : d });
    loopDelays += g.edgeDelays[e];
    loopStages += g.stages[g.edgeFrom[e]];
    if (g.unitOf[g.edgeFrom[e]] >= 0) units.add(g.unitOf[g.edgeFrom[e]]);
    if (d < 0) {
      conflictingEdges.push({ from, to, foldedDelay: d });
      for (const x of [g.edgeFrom[e], g.edgeTo[e]]) {
        // Operations can change position in their set; boundary nodes with a slot can change slot.
        const canMove = g.role[x] === OPERATION || g.slot[x] !== NO_SLOT;
        if (canMove && !movable.has(g.nodeIds[x])) {
          movable.add(g.nodeIds[x]);
          if (g.role[x] !== OPERATION) movableBoundary = true;
        }
      }
    }
    const nextEdge = ordered[(k + 1) % ordered.length];
    if (g.edgeTo[e] !== g.edgeFrom[nextEdge]) {
      viaBoundary = true;
      edges.push({
        from: to,
        to: g.nodeIds[g.edgeFrom[nextEdge]],
        delays: 0,
        foldedDelay: null,
        viaBoundary: true,
      });
    }
  }
  const minFactor = loopDelays > 0 ? Math.max(1, Math.ceil(loopStages / loopDelays)) : null;
  const N = g.factor;
  const names = edges.map((x) => x.from);
  const loopText =
    names.length <= 8
      ? names.concat(names[0]).join(' -> ')
      : `${names.slice(0, 3).join(' -> ')} -> ... (${names.length} nodes) -> ${names[names.length - 1]} -> ${names[0]}`;
  const listed = (xs: string[]) => (xs.length <= 10 ? xs.join(', ') : `${xs.slice(0, 10).join(', ')} and ${xs.length - 10} more`);
  const suggestions: string[] = [];
  if (minFactor !== null && N < minFactor) {
    suggestions.push(
      `Raise the folding factor to ${minFactor} or more: the loop ${loopText} has ${loopStages} pipeline stage(s) over ${loopDelays} delay(s), so at N = ${N} its total folded delay N*${loopDelays} - ${loopStages} = ${N * loopDelays - loopStages} is negative whatever the positions.`,
    );
  } else if (movable.size > 0) {
    suggestions.push(
      `Give ${listed([...movable])} other partitions (positions in the folding sets${
        movableBoundary ? ', or the slot of the input or output' : ''
      }): at N = ${N} the loop ${loopText} ${
        minFactor !== null ? `has room for its ${loopStages} pipeline stage(s)` : 'carries no delay'
      }, but the chosen partitions leave ${listed(conflictingEdges.map((c) => `${c.from} -> ${c.to} at ${c.foldedDelay}`))} more negative than retiming can repair.`,
    );
  }
  if (loopStages > 0 && units.size > 0) {
    const unitNames = listed([...units].map((k) => g.unitIds[k]));
    suggestions.push(
      `Use fewer pipeline stages on ${unitNames}: the loop carries ${loopStages} stage(s)${
        loopDelays > 0 ? ` and, at N = ${N}, has room for at most ${N * loopDelays}` : ''
      }; each stage removed adds one cycle of folded delay on the edge leaving that unit.`,
    );
  }
  if (latency === 'fixed' && viaBoundary) {
    suggestions.push(
      'Set folding.latency to free: this conflict runs from the inputs to the outputs, which fixed latency keeps aligned; with free latency retiming may add iterations of latency instead.',
    );
  }
  return { edges, loopDelays, loopStages, minFactor, conflictingEdges, suggestions };
}
