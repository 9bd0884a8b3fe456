// The engine's one path from a design file's text to that design's report, used by every caller
// (pleat check, simulate, rtl, the server's uploads and try-a-design): load and validate ->
// analyse -> control tables -> rules -> report with every finding placed at a line and column.
// docs/architecture.md draws it; each stage lives in its folder (design/, analysis/, hardware/, report/).
import type { Analysis, ControlTables, Design, Diagnostic, DesignReport, EffectiveRules, LoadResult, Violation } from './types';
import { loadDesign, nameOfInvalidDesign, syntaxOfFile, type Limits } from './design/load';
import { locate, locateLoaded } from './design/positions';
import { analyzeDatapath, type AnalyzeOptions, type FoldedDatapath } from './analysis/analyze';
import { DEFAULT_MAX_CONTROL_CELLS, withControl } from './hardware/control';
import { resolveArithmetic } from './hardware/reference';
import { formatPlan } from './hardware/formats';
import { bitGrowth } from './hardware/range';
import { applyRules, mergeRules } from './report/rules';
import { designReport } from './report/report';

export interface PipelineOptions extends AnalyzeOptions {
  /** The rules in force (a team floor merged with the repository's); none: no rule is checked. */
  rules?: EffectiveRules;
  /**
   * Largest register tables (partitions x registers) that the report carries: the control tables
   * and, unless maxAllocationCells says otherwise, the allocation table, so a report has both or
   * neither. Default DEFAULT_MAX_CONTROL_CELLS (docs/analysis.md, "Register allocation").
   */
  maxControlCells?: number;
  /** false: leave the control tables out (simulate and rtl build them whole, with reasons, from `datapath`). */
  withControl?: boolean;
  limits?: Partial<Limits>;
  /**
   * Called once the design is loaded, when the parsed document (about as large as the Design) has
   * just become garbage: a caller that can force a full collection (the CLI, on a large file)
   * does so here, since V8 otherwise keeps it until after the peak (docs/performance.md, "Peak memory").
   */
  afterLoad?: () => void;
}

/** What the stages made of one design: the report, and the intermediate results for hardware stages. */
export interface DesignRun {
  report: DesignReport;
  design: Design | null;
  analysis: Analysis | null;
  /** The folded datapath the analysis chose; null when none exists or the design is invalid. */
  datapath: FoldedDatapath | null;
  /** Full control tables, when asked for within maxControlCells and a feasible datapath exists. */
  control: ControlTables | null;
  diagnostics: Diagnostic[];
  violations: Violation[];
}

const NO_RULES: EffectiveRules = mergeRules(null, null).effective;

/** Runs every stage on one design text. Never throws: an engine failure becomes an `internal-error` diagnostic. */
export function runDesignText(text: string, file: string, options: PipelineOptions = {}): DesignRun {
  let loaded: LoadResult;
  try {
    // `*.fold.json` is JSON only; any other name is YAML, which takes JSON text too (docs/format.md).
    loaded = loadDesign(text, { syntax: syntaxOfFile(file), ...(options.limits ? { limits: options.limits } : {}) });
  } catch (e) {
    return failed(file, nameOfInvalid(text), e);
  }
  options.afterLoad?.();
  if (!loaded.design) {
    const report = designReport({ file, name: nameOfInvalid(text), diagnostics: loaded.diagnostics, analysis: null });
    return { report, design: null, analysis: null, datapath: null, control: null, diagnostics: loaded.diagnostics, violations: [] };
  }
  try {
    return runDesignModel(loaded.design, file, { ...options, text, diagnostics: loaded.diagnostics });
  } catch (e) {
    return failed(file, loaded.design.name, e);
  }
}

/**
 * The stages after loading, on a design already in memory (a generated one, the fully parallel
 * reference of `pleat rtl --area`). With `text`, findings of the rules are placed in it.
 */
export function runDesignModel(
  design: Design,
  file: string,
  options: PipelineOptions & { text?: string; diagnostics?: Diagnostic[] } = {},
): DesignRun {
  // Under negative_delays: fail nothing is retimed: the plan is judged as written.
  const retime = options.retime ?? options.rules?.negative_delays?.value !== 'fail';
  // Without control tables (simulate builds them whole) the analysis keeps its own, larger limit.
  const reportCells = options.maxControlCells ?? DEFAULT_MAX_CONTROL_CELLS;
  const maxAllocationCells = options.maxAllocationCells ?? (options.withControl === false ? undefined : reportCells);
  const { analysis: bare, datapath } = analyzeDatapath(design, { ...options, retime, ...(maxAllocationCells !== undefined ? { maxAllocationCells } : {}) });
  const analysis = options.withControl === false ? bare : withControl(design, bare, reportCells, datapath);
  const control = analysis.control ?? null;
  const { violations: raw, warnings } = applyRules(analysis, options.rules ?? NO_RULES);
  const text = options.text;
  // One reading of the text places the rule findings, their warnings and the edges the report
  // names (negative folded delays, the blocking loop); the analysis itself stays as the later
  // stages use it.
  const { violations, ruleWarnings, analysis: placed } =
    text !== undefined ? placeFindings(text, raw, warnings, analysis) : { violations: raw, ruleWarnings: warnings, analysis };
  const diagnostics = [...(options.diagnostics ?? []), ...(text !== undefined ? narrowFormats(design, text) : [])];
  const report = designReport({ file, name: design.name, diagnostics, analysis: placed, violations, ruleWarnings });
  return { report, design, analysis, datapath, control, diagnostics: [...diagnostics, ...ruleWarnings], violations };
}

/** Data width of the signals a file leaves without a format: `pleat simulate`'s default (Q15.0). */
const CHECK_DEFAULT_WIDTH = 16;

/**
 * `format-too-narrow` warnings of bit growth (docs/analysis.md, "Bit growth"), for a design that
 * declares number formats; a design without any is an integer datapath whose width is chosen at
 * simulate or rtl time, so there is nothing to judge and its report stays as it was. Only signals
 * whose format the file gives (their own or `fixed_point.format`) are judged; each finding points
 * at the node's own `format` when it has one, else at the node.
 */
function narrowFormats(design: Design, text: string): Diagnostic[] {
  const declaresFormat = design.fixedPoint?.format !== undefined || design.nodes.some((n) => n.format !== undefined);
  if (!declaresFormat) return [];
  const { graph, diagnostics: unresolved } = resolveArithmetic(design);
  // A node without usable arithmetic has no range; simulate and rtl say why when asked to run it.
  if (!graph || unresolved.length > 0) return [];
  const growth = bitGrowth(design, graph, formatPlan(design, CHECK_DEFAULT_WIDTH));
  const judged = growth.diagnostics.flatMap((d): Diagnostic[] => {
    const i = d.path?.[1];
    if (typeof i !== 'number') return [];
    const own = design.nodes[i].format !== undefined;
    if (!own && design.fixedPoint?.format === undefined) return [];
    return [{ ...d, path: own ? ['nodes', i, 'format'] : ['nodes', i] }];
  });
  if (judged.length === 0) return [];
  try {
    return locate(text, judged, () => false);
  } catch {
    return judged;
  }
}

/**
 * Above this size a design's text is read for positions only when a rule finding needs one:
 * the reading costs about as much as the analysis of a large design (docs/cli.md, "Text").
 */
export const PLACE_EDGES_ALWAYS_BELOW_CHARS = 4 * 1024 * 1024;

/**
 * Line and column for what the report points at, in one walk of the text: the violations (the
 * first negative edge, a unit's set), the rule warnings with a path, and the edges the report
 * names (every negative folded delay and every edge of the blocking loop). Other edges stay
 * unplaced: a design may have hundreds of thousands.
 */
function placeFindings(text: string, violations: Violation[], warnings: Diagnostic[], analysis: Analysis): { violations: Violation[]; ruleWarnings: Diagnostic[]; analysis: Analysis } {
  const findings = violations.some((v) => v.path) || warnings.some((w) => w.path);
  const wanted = new Set<number>();
  const loop = analysis.retiming.conflict?.edges ?? [];
  const loopIndex = loop.map((c) => (c.viaBoundary ? -1 : analysis.edges.findIndex((e) => e.from === c.from && e.to === c.to && e.delays === c.delays)));
  if (findings || text.length < PLACE_EDGES_ALWAYS_BELOW_CHARS) {
    analysis.edges.forEach((e, i) => {
      if (e.foldedDelay !== null && e.foldedDelay < 0) wanted.add(i);
    });
    for (const i of loopIndex) if (i >= 0) wanted.add(i);
  }
  if (!findings && wanted.size === 0) return { violations, ruleWarnings: warnings, analysis };
  const order = [...wanted];
  const withWarnings = warnings.some((w) => w.path);
  const probes: Diagnostic[] = [
    ...violations.map((v): Diagnostic => ({ severity: 'error', code: `rule-${v.rule}`, message: v.message, line: null, column: null, path: v.path ?? [] })),
    ...order.map((i): Diagnostic => ({ severity: 'warning', code: 'edge', message: '', line: null, column: null, path: ['edges', i] })),
    ...(withWarnings ? warnings : []),
  ];
  let placed: Diagnostic[];
  try {
    placed = locateLoaded(text, probes);
  } catch {
    return { violations, ruleWarnings: warnings, analysis };
  }
  const placedWarnings = withWarnings ? placed.slice(violations.length + order.length) : warnings;
  const outViolations = violations.map((v, i) => (v.path ? { ...v, line: placed[i].line, column: placed[i].column } : v));
  const pos = new Map<number, { line: number | null; column: number | null }>();
  order.forEach((i, k) => {
    const p = placed[violations.length + k];
    pos.set(i, { line: p.line, column: p.column });
  });
  if (pos.size === 0) return { violations: outViolations, ruleWarnings: placedWarnings, analysis };
  const edges = analysis.edges.map((e, i) => (pos.has(i) ? { ...e, ...pos.get(i)! } : e));
  const conflict = analysis.retiming.conflict;
  const retiming = conflict
    ? { ...analysis.retiming, conflict: { ...conflict, edges: conflict.edges.map((c, k) => (loopIndex[k] >= 0 ? { ...c, ...pos.get(loopIndex[k])! } : c)) } }
    : analysis.retiming;
  return { violations: outViolations, ruleWarnings: placedWarnings, analysis: { ...analysis, edges, retiming } };
}

function nameOfInvalid(text: string): string | null {
  try {
    return nameOfInvalidDesign(text);
  } catch {
    return null;
  }
}

function failed(file: string, name: string | null, e: unknown): DesignRun {
  // One design's engine failure is reported on that design; the caller goes on with the others.
  const d: Diagnostic = { severity: 'error', code: 'internal-error', message: `the checker failed on this design: ${(e as Error)?.message ?? String(e)}`, line: null, column: null };
  const report = designReport({ file, name, diagnostics: [d], analysis: null });
  return { report, design: null, analysis: null, datapath: null, control: null, diagnostics: [d], violations: [] };
}
