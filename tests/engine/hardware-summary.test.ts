// The hardware summary of `pleat rtl --area` (shared/report/hardwareSummary.ts, docs/rtl.md) and
// its place in the upload schema (shared/report/reportSchema.ts): what is taken and what is refused.
// Checked with ajv, the JSON Schema validator the schema is written for (common practice, no source).
import { describe, expect, it } from 'vitest';
import { hardwareSummaryProblem, type HardwareSummary } from '../../shared/report/hardwareSummary';
import { checkUploadReport } from '../../shared/report/reportSchema';

const summary: HardwareSummary = {
  format: 'pleat-hardware',
  version: 1,
  design: 'cabin-eq-peak',
  file: 'examples/equaliser-retimed.fold.yaml',
  top: 'cabin_eq_peak',
  tool: 'Yosys 0.23',
  compared: { stages: 'folded', multipliers: 'general', width: 16, coefFrac: 14 },
  folded: { cells: 2764, flipFlops: 116, depth: 41, factor: 5 },
  parallel: { cells: 11242, flipFlops: 292, depth: null, factor: 5 },
};

const report = (hardware: unknown) => ({
  format: 'pleat-report/1',
  tool: { name: 'pleat', version: '1.0.0' },
  git: { branch: 'main', commit: 'abcdef1' },
  verdict: 'pass',
  designs: [{ file: 'a.fold.yaml', name: 'cabin-eq-peak', status: 'pass', diagnostics: [], violations: [], hardware }],
});

describe('hardware summary schema', () => {
  it('takes a summary, a loop (depth null) included, and unknown extra fields', () => {
    expect(hardwareSummaryProblem(summary)).toBeNull();
    expect(hardwareSummaryProblem({ ...summary, later: { field: 1 } })).toBeNull();
  });

  it('refuses another version, a missing side, a negative or fractional count, a factor of 0', () => {
    expect(hardwareSummaryProblem({ ...summary, version: 2 })).toMatch(/^\/version /);
    const { parallel: _p, ...noParallel } = summary;
    expect(hardwareSummaryProblem(noParallel)).toMatch(/parallel/);
    expect(hardwareSummaryProblem({ ...summary, folded: { ...summary.folded, cells: -1 } })).toMatch(/^\/folded\/cells /);
    expect(hardwareSummaryProblem({ ...summary, folded: { ...summary.folded, depth: 1.5 } })).toMatch(/^\/folded\/depth/);
    expect(hardwareSummaryProblem({ ...summary, parallel: { ...summary.parallel, factor: 0 } })).toMatch(/^\/parallel\/factor /);
    expect(hardwareSummaryProblem({ ...summary, format: 'pleat-rtl/1' })).toMatch(/^\/format /);
  });

  it('rides in an upload as designs[].hardware, or null, and is checked there too', () => {
    expect(checkUploadReport(report(summary)).ok).toBe(true);
    expect(checkUploadReport(report(null)).ok).toBe(true);
    const bad = checkUploadReport(report({ ...summary, folded: { ...summary.folded, flipFlops: 'many' } }));
    expect(bad.ok).toBe(false);
    if (!bad.ok) expect(bad.message).toMatch(/^\/designs\/0\/hardware\/folded\/flipFlops /);
  });
});
