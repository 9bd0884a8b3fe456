// The output of `pleat rtl` in one place: the Verilog of the folded datapath, its self-checking
// testbench and the `<top>.rtl.json` manifest (format pleat-rtl/1, docs/rtl.md). `pleat rtl` builds
// with buildRtlOutput and adds its verification and area runs; the server's RTL download calls
// rtlFilesOfText with the command's defaults, so both give the same files for the same design.
import { loadDesign } from '../design/load';
import { analyzeDatapath } from '../analysis/analyze';
import { controlTables } from './control';
import { resolveArithmetic } from './reference';
import { generateRtl, generateTestbench, testVectors, type RtlOptions } from './rtl';
import { formatPlan } from './formats';
import { bitGrowth } from './range';
import type { ResolvedGraph } from './reference';
import type { ControlTables, Design, Diagnostic, OutputLatencyReport } from '../types';

/** The defaults of `pleat rtl` (docs/cli.md): W = 16, 14 fractional coefficient bits, 32 samples, seed 1. */
export const RTL_DEFAULTS = { width: 16, coefFrac: 14, iterations: 32, seed: 1 } as const;

export interface RtlOutputOptions {
  width: number;
  coefFrac: number;
  iterations: number;
  seed: number;
  interface?: RtlOptions['interface'];
  /** The tool version the generator line and the manifest name (`pleat <version>`). */
  version: string;
}

/** Everything `pleat rtl` writes, before any tool runs: files, manifest, and the bit-growth findings. */
export interface RtlOutput {
  bundle: ReturnType<typeof generateRtl>;
  testbench: { name: string; text: string };
  /** The manifest with `verify` and `area` null: the CLI fills them when it runs the tools. */
  manifest: Record<string, unknown> & { files: string[]; verify: unknown; area: unknown };
  /** Signals whose format is too narrow for their worst case (unplaced: the caller has the text). */
  narrow: Diagnostic[];
  /** Overflows the test vectors meet in the model, per node (the testbench expects the same). */
  overflows: ReturnType<typeof testVectors>['overflows'];
}

/** `latency` is the analysis's report of each output's latency (docs/analysis.md), recorded in the manifest. */
export function buildRtlOutput(
  design: Design, file: string, graph: ResolvedGraph, control: ControlTables, o: RtlOutputOptions, latency?: OutputLatencyReport,
): RtlOutput {
  // Bit growth before writing: a format too narrow for its worst case is worth a warning.
  const growth = bitGrowth(design, graph, formatPlan(design, o.width));
  const bundle = generateRtl(design, control, { width: o.width, coefFrac: o.coefFrac, generator: `pleat ${o.version}`, interface: o.interface });
  const vectors = testVectors(design, graph, control, { iterations: o.iterations, seed: o.seed, fixed: bundle.fixed, formatWidth: o.width });
  const tb = generateTestbench(bundle, control, vectors);
  const manifest = {
    format: 'pleat-rtl/1',
    tool: { name: 'pleat', version: o.version },
    file,
    design: design.name,
    top: bundle.top,
    files: [...bundle.files.map((f) => f.name), tb.name],
    width: bundle.fixed.width,
    coefFrac: bundle.fixed.coefFrac,
    coefWidth: bundle.coefWidth,
    coefficients: bundle.coefficients,
    factor: bundle.factor,
    interface: bundle.interface ?? 'strobe',
    ...(bundle.interface === 'stream' ? { start: bundle.start, busy: bundle.busy } : {}),
    latencyAdded: control.latencyAdded,
    ports: bundle.ports,
    renamed: bundle.renamed,
    warnings: bundle.warnings,
    testbench: { file: tb.name, iterations: vectors.iterations, samplesPerOutput: vectors.samples, seed: vectors.seed, overflows: vectors.overflows },
    bitGrowth: { method: growth.method, ...(growth.reason ? { reason: growth.reason } : {}), signals: growth.signals },
    verify: null as unknown,
    area: null as unknown,
    control,
    ...(bundle.serial ? { serial: bundle.serial } : {}),
    ...(latency ? { outputLatency: latency } : {}),
  };
  return { bundle, testbench: tb, manifest, narrow: growth.diagnostics, overflows: vectors.overflows };
}

export type RtlFiles =
  | { ok: true; top: string; files: { name: string; text: string }[] }
  | { ok: false; reason: string };

/**
 * The files of `pleat rtl FILE` with its default options, for the server. Never throws for a
 * design that cannot be built: it says why (invalid, no arithmetic, no feasible datapath, too large).
 */
export function rtlFilesOfText(text: string, file: string, version: string): RtlFiles {
  const loaded = loadDesign(text);
  const errors = loaded.diagnostics.filter((d) => d.severity === 'error');
  if (!loaded.design || errors.length) return { ok: false, reason: `${file} is not a valid design (${errors.length} error${errors.length === 1 ? '' : 's'}).` };
  const design = loaded.design;
  const arithmetic = resolveArithmetic(design);
  if (arithmetic.diagnostics.length || !arithmetic.graph) {
    return { ok: false, reason: `${file} cannot be evaluated: ${arithmetic.diagnostics.length} node${arithmetic.diagnostics.length === 1 ? '' : 's'} without usable arithmetic.` };
  }
  // As runDesignModel does for `pleat rtl`: no rules, so a needed retiming is applied.
  const { analysis, datapath } = analyzeDatapath(design, { retime: true });
  const built = controlTables(design, analysis, datapath);
  if (!built.control) {
    return {
      ok: false,
      reason: built.tooLarge
        ? `The folded datapath is too large to build: ${built.reason}.`
        : 'The plan has no feasible folded datapath: no retiming makes every folded delay nonnegative.',
    };
  }
  const out = buildRtlOutput(design, file, arithmetic.graph, built.control, { ...RTL_DEFAULTS, version }, analysis.outputLatency);
  return {
    ok: true,
    top: out.bundle.top,
    files: [...out.bundle.files, out.testbench, { name: `${out.bundle.top}.rtl.json`, text: `${JSON.stringify(out.manifest, null, 2)}\n` }],
  };
}
