// A design file's text -> the files `pleat rtl` writes with its default options: the Verilog of
// the folded datapath, its self-checking testbench and the `<top>.rtl.json` manifest. The server's
// RTL download uses it; the steps are those of cli/commands/rtl.ts (load, the analysis with
// retiming, the whole control tables, generateRtl, testVectors, generateTestbench), so the Verilog
// is byte for byte the CLI's for the same design and version.
import { loadDesign } from '../design/load';
import { analyzeDatapath } from '../analysis/analyze';
import { controlTables } from './control';
import { resolveArithmetic } from './reference';
import { generateRtl, generateTestbench, testVectors } from './rtl';

/** The defaults of `pleat rtl` (docs/cli.md): W = 16, 14 fractional coefficient bits, 32 samples, seed 1. */
export const RTL_DEFAULTS = { width: 16, coefFrac: 14, iterations: 32, seed: 1 } as const;

export type RtlFiles =
  | { ok: true; top: string; files: { name: string; text: string }[] }
  | { ok: false; reason: string };

/**
 * `version` is the tool version the generator line names (`pleat <version>`). Never throws for a
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
  const control = built.control;
  const generator = `pleat ${version}`;
  const bundle = generateRtl(design, control, { width: RTL_DEFAULTS.width, coefFrac: RTL_DEFAULTS.coefFrac, generator });
  const vectors = testVectors(design, arithmetic.graph, control, { iterations: RTL_DEFAULTS.iterations, seed: RTL_DEFAULTS.seed, fixed: bundle.fixed });
  const tb = generateTestbench(bundle, control, vectors);
  // The manifest of `pleat rtl` (format pleat-rtl/1), without a verification or area run.
  const manifest = {
    format: 'pleat-rtl/1',
    tool: { name: 'pleat', version },
    file,
    design: design.name,
    top: bundle.top,
    files: [...bundle.files.map((f) => f.name), tb.name],
    width: bundle.fixed.width,
    coefFrac: bundle.fixed.coefFrac,
    coefWidth: bundle.coefWidth,
    coefficients: bundle.coefficients,
    factor: bundle.factor,
    latencyAdded: control.latencyAdded,
    ports: bundle.ports,
    renamed: bundle.renamed,
    warnings: bundle.warnings,
    testbench: { file: tb.name, iterations: vectors.iterations, samplesPerOutput: vectors.samples, seed: vectors.seed },
    verify: null,
    area: null,
    control,
  };
  return {
    ok: true,
    top: bundle.top,
    files: [...bundle.files, tb, { name: `${bundle.top}.rtl.json`, text: `${JSON.stringify(manifest, null, 2)}\n` }],
  };
}
