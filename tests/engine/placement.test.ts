// Where the engine's report points: the edges it names and the rule findings carry the line and
// column of the design text they concern, so the CLI, the server and the web show the same
// places. Expected lines are counted in the fixture texts below (common practice, no source).
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { PLACE_EDGES_ALWAYS_BELOW_CHARS, runDesignText } from '../../shared/pipeline';
import { mergeRules } from '../../shared/report/rules';
import { failingDesign, passingDesign } from '../cli/helpers';

describe('placed findings', () => {
  it('a loop that cannot be retimed: its negative edge and the rule point at the edge line', () => {
    // failingDesign: line 13 is `- { from: m, to: a, port: 1 }`, line 14 `- { from: a, to: m, delays: 1 }`.
    const { report } = runDesignText(failingDesign(), 'f.fold.yaml', { rules: mergeRules(null, null).effective });
    const negative = report.edges!.filter((e) => e.foldedDelay !== null && e.foldedDelay < 0);
    expect(negative.map((e) => [e.from, e.to, e.line, e.column])).toEqual([['m', 'a', 13, 5]]);
    expect(report.retiming!.conflict!.edges.map((e) => [e.from, e.to, e.line])).toEqual(
      expect.arrayContaining([['m', 'a', 13], ['a', 'm', 14]]),
    );
    expect(report.violations.map((v) => [v.rule, v.line])).toEqual([['negative_delays', 13]]);
    // Edges the report does not name stay unplaced: a design may have very many.
    expect(report.edges!.find((e) => e.from === 'x')!.line).toBeUndefined();
  });

  it('max_registers points at the units, not at folding.factor', () => {
    // passingDesign: line 3 is `units:`, line 4 the first unit; line 18 is `factor: 2`.
    const rules = mergeRules(null, { max_registers: 0 }).effective;
    const { report } = runDesignText(passingDesign(), 'p.fold.yaml', { rules });
    const v = report.violations.find((x) => x.rule === 'max_registers')!;
    expect(v.line).toBe(4);
    expect(v.line).not.toBe(18);
  });

  it('in a very large file, edges are placed only when a rule finding needs the text read anyway', () => {
    // Our own fixture: a plan whose negative folded delays retiming removes (it passes the default rules).
    const retimed = readFileSync(path.join(__dirname, '../sim/fixtures/smoothing-retimed.fold.yaml'), 'utf8');
    const big = `${retimed}\n# ${'x'.repeat(PLACE_EDGES_ALWAYS_BELOW_CHARS)}\n`;
    const negatives = (r: ReturnType<typeof runDesignText>) => r.report.edges!.filter((e) => e.foldedDelay !== null && e.foldedDelay < 0);
    const small = runDesignText(retimed, 's.fold.yaml', { rules: mergeRules(null, null).effective });
    expect(small.report.status).toBe('pass');
    expect(negatives(small).length).toBeGreaterThan(0);
    expect(negatives(small).every((e) => typeof e.line === 'number')).toBe(true);
    const quiet = runDesignText(big, 'b.fold.yaml', { rules: mergeRules(null, null).effective });
    expect(negatives(quiet).every((e) => e.line === undefined)).toBe(true);
    const failing = runDesignText(big, 'b.fold.yaml', { rules: mergeRules(null, { min_utilization: 1 }).effective });
    expect(failing.report.status).toBe('fail');
    expect(negatives(failing).map((e) => e.line)).toEqual(negatives(small).map((e) => e.line));
  });
});
