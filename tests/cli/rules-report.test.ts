// The rule floor, the rules themselves and report assembly (shared/report/rules.ts, shared/report/report.ts).
// The expectations are the project's contract for the gate (docs/cli.md); the floor property is
// checked on random rule sets with fast-check.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Ajv } from 'ajv';
import { applyRules, checkRules, mergeRules, RULES_SCHEMA } from '../../shared/report/rules';
import { buildReport, designReport, exitCodeOf, worstStatus } from '../../shared/report/report';
import type { Analysis, EffectiveRules, Rules } from '../../shared/types';

function analysis(over: Partial<Analysis> = {}): Analysis {
  return {
    factor: 4,
    edges: [
      { from: 'a', to: 'b', delays: 0, foldedDelay: -1, retimedDelays: 1, retimedFoldedDelay: 3 },
      { from: 'b', to: 'a', delays: 1, foldedDelay: 5, retimedDelays: 0, retimedFoldedDelay: 1 },
    ],
    retiming: { needed: true, feasible: true, values: { a: 0, b: 1 }, latencyAdded: 0, conflict: null },
    utilization: { overall: 0.5, units: { ADD1: 0.75, MUL1: 0.25 } },
    registers: { perEdge: 4, delayLines: 4, minimum: 3 },
    lifetimes: null,
    allocation: null,
    iterationBound: { value: 2, numerator: 2, denominator: 1, loop: ['a', 'b'] },
    factorLowerBound: 1,
    schedule: [],
    samplePeriodNs: null,
    sampleRateMHz: null,
    ...over,
  };
}

describe('mergeRules: team rules are a floor', () => {
  it('fills the default negative_delays policy and nothing else', () => {
    expect(mergeRules(null, null).effective).toEqual({ negative_delays: { value: 'retime', source: 'default' } });
  });

  it('lets the repository tighten and records where each rule came from', () => {
    const { effective, notes } = mergeRules(
      { min_utilization: 0.5, max_registers: 64, negative_delays: 'retime' },
      { min_utilization: 0.8, max_registers: 32, negative_delays: 'fail', min_unit_utilization: 0.25 },
    );
    expect(effective).toEqual({
      negative_delays: { value: 'fail', source: 'repository' },
      min_utilization: { value: 0.8, source: 'repository' },
      min_unit_utilization: { value: 0.25, source: 'repository' },
      max_registers: { value: 32, source: 'repository' },
    });
    expect(notes).toEqual([]);
  });

  it('never lets the repository loosen, and says so', () => {
    const { effective, notes } = mergeRules(
      { min_utilization: 0.75, max_registers: 32, negative_delays: 'fail' },
      { min_utilization: 0.5, max_registers: 64, negative_delays: 'warn' },
    );
    expect(effective.min_utilization).toEqual({ value: 0.75, source: 'team' });
    expect(effective.max_registers).toEqual({ value: 32, source: 'team' });
    expect(effective.negative_delays).toEqual({ value: 'fail', source: 'team' });
    expect(notes.map((n) => n.rule).sort()).toEqual(['max_registers', 'min_utilization', 'negative_delays']);
  });

  it('gives a tie to the team', () => {
    expect(mergeRules({ max_registers: 8 }, { max_registers: 8 }).effective.max_registers).toEqual({ value: 8, source: 'team' });
  });

  it('is never looser than either side (property, random rule sets)', () => {
    const rank = { warn: 0, retime: 1, fail: 2 } as const;
    const rules = fc.record(
      {
        negative_delays: fc.constantFrom('fail' as const, 'retime' as const, 'warn' as const),
        min_utilization: fc.double({ min: 0, max: 1, noNaN: true }),
        min_unit_utilization: fc.double({ min: 0, max: 1, noNaN: true }),
        max_registers: fc.nat(1000),
      },
      { requiredKeys: [] },
    );
    fc.assert(
      fc.property(rules, rules, (team: Rules, repo: Rules) => {
        const e = mergeRules(team, repo).effective;
        for (const side of [team, repo]) {
          if (side.negative_delays) expect(rank[e.negative_delays!.value]).toBeGreaterThanOrEqual(rank[side.negative_delays]);
          if (side.min_utilization !== undefined) expect(e.min_utilization!.value).toBeGreaterThanOrEqual(side.min_utilization);
          if (side.min_unit_utilization !== undefined) expect(e.min_unit_utilization!.value).toBeGreaterThanOrEqual(side.min_unit_utilization);
          if (side.max_registers !== undefined) expect(e.max_registers!.value).toBeLessThanOrEqual(side.max_registers);
        }
        // Whatever is in force came from a side that set it (or the default).
        for (const [k, r] of Object.entries(e)) {
          if (r.source !== 'default') expect((r.source === 'team' ? team : repo)[k as keyof Rules]).toBe(r.value);
        }
      }),
    );
  });
});

describe('checkRules', () => {
  it('accepts the documented rules and rejects typos and bad values with their paths', () => {
    expect(checkRules({ negative_delays: 'warn', min_utilization: 0.75, min_unit_utilization: 0, max_registers: 64 })).toEqual({
      rules: { negative_delays: 'warn', min_utilization: 0.75, min_unit_utilization: 0, max_registers: 64 },
      problems: [],
    });
    const { problems } = checkRules({ negative_delays: 'maybe', min_utilization: 75, max_registers: 2.5, min_utilisation: 0.5 });
    expect(problems.map((p) => p.path.join('.'))).toEqual(['rules.negative_delays', 'rules.min_utilization', 'rules.max_registers', 'rules.min_utilisation']);
    expect(problems[3].message).toContain('did you mean "min_utilization"?');
  });

  it('accepts exactly what ajv accepts under the rules schema the server uses', () => {
    // ajv (npm registry) is the outside judge of the one JSON Schema of rules.
    const validate = new Ajv({ strict: false }).compile(RULES_SCHEMA);
    const value = fc.oneof(
      fc.constantFrom('fail', 'retime', 'warn', 'maybe', '', null, true, [], {}),
      fc.double({ min: -2, max: 70, noNaN: true }),
      fc.integer({ min: -5, max: 100 }),
    );
    const key = fc.constantFrom('negative_delays', 'min_utilization', 'min_unit_utilization', 'max_registers', 'max_register');
    fc.assert(
      fc.property(fc.dictionary(key, value, { maxKeys: 4 }), (raw) => {
        expect(checkRules(raw).problems.length === 0).toBe(validate(raw));
      }),
      { numRuns: 2000 },
    );
  });
});

describe('applyRules', () => {
  const rules = (r: Rules): EffectiveRules => mergeRules(null, r).effective;

  it('retime (default): negative folded delays that retiming fixes pass', () => {
    expect(applyRules(analysis(), rules({}))).toEqual({ violations: [], warnings: [] });
  });

  it('retime: fails when no retiming exists', () => {
    const a = analysis({ retiming: { needed: true, feasible: false, values: {}, latencyAdded: 0, conflict: null }, registers: null });
    const { violations } = applyRules(a, rules({}));
    expect(violations).toMatchObject([{ rule: 'negative_delays', source: 'default', limit: 'retime' }]);
  });

  it('fail: any negative folded delay fails, even one retiming would fix', () => {
    const { violations } = applyRules(analysis(), rules({ negative_delays: 'fail' }));
    expect(violations).toMatchObject([{ rule: 'negative_delays', source: 'repository', limit: 'fail', actual: 1 }]);
  });

  it('warn: reports and never fails', () => {
    const a = analysis({ retiming: { needed: true, feasible: false, values: {}, latencyAdded: 0, conflict: null }, registers: null });
    const { violations, warnings } = applyRules(a, rules({ negative_delays: 'warn' }));
    expect(violations).toEqual([]);
    expect(warnings.map((w) => w.code)).toEqual(['negative-folded-delay']);
  });

  it('utilization rules compare design-wide and per unit; an exact limit passes', () => {
    expect(applyRules(analysis(), rules({ min_utilization: 0.5 })).violations).toEqual([]);
    expect(applyRules(analysis(), rules({ min_utilization: 0.51 })).violations).toMatchObject([{ rule: 'min_utilization', limit: 0.51, actual: 0.5 }]);
    expect(applyRules(analysis(), rules({ min_unit_utilization: 0.5 })).violations).toMatchObject([{ rule: 'min_unit_utilization', unit: 'MUL1', actual: 0.25 }]);
  });

  it('max_registers applies to the lifetime minimum, and is not checked without a datapath', () => {
    expect(applyRules(analysis(), rules({ max_registers: 3 })).violations).toEqual([]);
    expect(applyRules(analysis(), rules({ max_registers: 2 })).violations).toMatchObject([{ rule: 'max_registers', limit: 2, actual: 3 }]);
    const none = applyRules(analysis({ registers: null }), rules({ max_registers: 2 }));
    expect(none.violations).toEqual([]);
    expect(none.warnings.map((w) => w.code)).toEqual(['rule-not-checked']);
  });
});

describe('report assembly', () => {
  it('sets analysis fields to null for a design in error', () => {
    const d = designReport({
      file: 'x.fold.yaml',
      name: null,
      diagnostics: [{ severity: 'error', code: 'yaml-syntax', message: 'bad', line: 1, column: 1 }],
      analysis: analysis(),
      violations: [{ rule: 'max_registers', source: 'repository', limit: 1, actual: 3, message: 'm' }],
    });
    expect(d.status).toBe('error');
    expect(d.edges).toBeNull();
    expect(d.registers).toBeNull();
    expect(d.violations).toEqual([]);
  });

  it('fails on a violation, and the verdict is the worst status', () => {
    const pass = designReport({ file: 'a', name: 'a', diagnostics: [], analysis: analysis() });
    const fail = designReport({ file: 'b', name: 'b', diagnostics: [], analysis: analysis(), violations: [{ rule: 'max_registers', source: 'team', limit: 1, actual: 3, message: 'm' }] });
    expect([pass.status, fail.status]).toEqual(['pass', 'fail']);
    const report = buildReport({ version: '0.1.0', git: { branch: null, commit: null }, rules: {}, designs: [pass, fail] });
    expect(report.verdict).toBe('fail');
    expect(exitCodeOf(report)).toBe(1);
    expect(worstStatus(['pass', 'error', 'fail'])).toBe('error');
    expect(worstStatus([])).toBe('pass');
    expect(Object.keys(report)).toEqual(['format', 'tool', 'git', 'verdict', 'rules', 'designs']);
  });
});
