// Rules of a folding gate: team rules are a floor under repository rules (a repository may
// tighten a team rule, never loosen it); every rule in force records where it came from.
// Strictness: fail > retime > warn; a higher min_* and a lower max_registers are tighter.
import type {
  Analysis,
  Diagnostic,
  EffectiveRules,
  NegativeDelayPolicy,
  RuleName,
  RuleSource,
  Rules,
  SimulationRuleName,
  Violation,
} from '../types';
import { closest } from '../didYouMean';

export const NEGATIVE_DELAY_POLICIES: readonly NegativeDelayPolicy[] = ['fail', 'retime', 'warn'];

/** What a rule accepts: the subset of JSON Schema (draft-07) that the rules mapping uses. */
type RuleSchema =
  | { enum: readonly string[]; description?: string }
  | { type: 'number' | 'integer'; minimum: number; maximum?: number; description?: string };

/** Largest max_registers: more registers than any design within the format's bounds can need is no limit. */
export const MAX_REGISTERS_RULE = 2_147_483_647;

/**
 * The one JSON Schema of the rules mapping: the server checks team rules with it (ajv), and
 * checkRules reads the same limits for the config file, so both accept the same values.
 */
export const RULES_SCHEMA: {
  type: 'object';
  additionalProperties: false;
  properties: Record<RuleName | SimulationRuleName, RuleSchema>;
} = {
  type: 'object',
  additionalProperties: false,
  properties: {
    negative_delays: { enum: NEGATIVE_DELAY_POLICIES },
    min_utilization: { type: 'number', minimum: 0, maximum: 1, description: 'a share of the available slots' },
    min_unit_utilization: { type: 'number', minimum: 0, maximum: 1, description: 'a share of the available slots' },
    max_registers: { type: 'integer', minimum: 0, maximum: MAX_REGISTERS_RULE },
    // Gates of `pleat simulate` (docs/rtl.md, "Fixed point"): a check does not simulate.
    max_overflows: { type: 'integer', minimum: 0, maximum: MAX_REGISTERS_RULE, description: 'fixed-point overflows in a pleat simulate run' },
    min_sqnr_db: { type: 'number', minimum: -1000, maximum: 1000, description: 'dB, of every output in a pleat simulate --arithmetic fixed run' },
  },
};

/** The rules of `pleat check` (merged as team floor and repository rules, applied to the analysis). */
export const RULE_NAMES = ['negative_delays', 'min_utilization', 'min_unit_utilization', 'max_registers'] as const satisfies readonly RuleName[];
/** The rules `pleat simulate` gates on. */
export const SIMULATION_RULE_NAMES = ['max_overflows', 'min_sqnr_db'] as const satisfies readonly SimulationRuleName[];
const ALL_RULE_NAMES: readonly string[] = Object.keys(RULES_SCHEMA.properties);

function accepts(spec: RuleSchema, value: unknown): boolean {
  if ('enum' in spec) return typeof value === 'string' && spec.enum.includes(value);
  if (typeof value !== 'number' || !Number.isFinite(value)) return false;
  if (spec.type === 'integer' && !Number.isInteger(value)) return false;
  return value >= spec.minimum && (spec.maximum === undefined || value <= spec.maximum);
}

/** What a rule accepts, in words: `one of fail, retime, warn`, `a number from 0 to 1`, `a whole number from 0 to 2,147,483,647`. */
function expected(spec: RuleSchema): string {
  if ('enum' in spec) return `one of ${spec.enum.join(', ')}`;
  const what = spec.type === 'integer' ? 'a whole number' : 'a number';
  const n = (x: number) => x.toLocaleString('en-US');
  const range = spec.maximum === undefined ? `${what} >= ${n(spec.minimum)}` : `${what} from ${n(spec.minimum)} to ${n(spec.maximum)}`;
  return spec.description ? `${range}, ${spec.description}` : range;
}

/** What applies when neither the team nor the repository says anything. */

export const DEFAULT_RULES: Rules = { negative_delays: 'retime' };

/** Codes of the warnings that applyRules adds to a design's diagnostics. */
export const RULE_WARNING_CODES = {
  negativeDelay: 'negative-folded-delay',
  notChecked: 'rule-not-checked',
  registersNotProven: 'registers-not-proven',
} as const;

/** A problem in a rules mapping (config file or server settings), with its path for positions. */
export interface RuleProblem {
  path: (string | number)[];
  message: string;
}

/**
 * Checks a raw `rules` mapping as written by a person. Unknown keys are errors on purpose:
 * a misspelt rule would otherwise silently switch a gate off.
 */
export function checkRules(raw: unknown, basePath: (string | number)[] = ['rules']): { rules: Rules; problems: RuleProblem[] } {
  const rules: Rules = {};
  const problems: RuleProblem[] = [];
  if (raw === null || raw === undefined) return { rules, problems };
  if (typeof raw !== 'object' || Array.isArray(raw)) {
    problems.push({ path: basePath, message: 'rules must be a mapping of rule name to limit' });
    return { rules, problems };
  }
  for (const [key, value] of Object.entries(raw as Record<string, unknown>)) {
    const path = [...basePath, key];
    const spec = Object.hasOwn(RULES_SCHEMA.properties, key) ? RULES_SCHEMA.properties[key as RuleName | SimulationRuleName] : undefined;
    if (!spec) {
      const near = closest(key, ALL_RULE_NAMES);
      problems.push({
        path,
        message: `unknown rule "${key}"${near ? `; did you mean "${near}"?` : ''} (known: ${ALL_RULE_NAMES.join(', ')})`,
      });
    } else if (accepts(spec, value)) {
      (rules as Record<string, unknown>)[key] = value;
    } else {
      problems.push({ path, message: `${key} must be ${expected(spec)} (got ${show(value)})` });
    }
  }
  return { rules, problems };
}

/** A note about a repository rule that the team floor overrode. */
export interface RuleNote {
  rule: RuleName;
  message: string;
}

/**
 * Merges team and repository rules into the rules in force. When both set a rule, the tighter
 * value wins; on a tie the source is 'team' (the floor would hold the value anyway).
 */
export function mergeRules(team: Rules | null | undefined, repository: Rules | null | undefined): { effective: EffectiveRules; notes: RuleNote[] } {
  const effective: EffectiveRules = {};
  const notes: RuleNote[] = [];
  const t = team ?? {};
  const r = repository ?? {};

  const pick = <K extends RuleName>(rule: K, tighter: (a: NonNullable<Rules[K]>, b: NonNullable<Rules[K]>) => boolean): void => {
    const tv = t[rule] as NonNullable<Rules[K]> | undefined;
    const rv = r[rule] as NonNullable<Rules[K]> | undefined;
    let chosen: { value: NonNullable<Rules[K]>; source: RuleSource } | undefined;
    if (tv !== undefined && rv !== undefined) {
      if (tighter(rv, tv)) chosen = { value: rv, source: 'repository' };
      else {
        chosen = { value: tv, source: 'team' };
        if (rv !== tv) {
          notes.push({ rule, message: `repository rule ${rule}: ${String(rv)} is looser than the team rule ${String(tv)}; the team rule applies` });
        }
      }
    } else if (tv !== undefined) chosen = { value: tv, source: 'team' };
    else if (rv !== undefined) chosen = { value: rv, source: 'repository' };
    else if (DEFAULT_RULES[rule] !== undefined) chosen = { value: DEFAULT_RULES[rule] as NonNullable<Rules[K]>, source: 'default' };
    if (chosen) (effective as Record<string, unknown>)[rule] = chosen;
  };

  pick('negative_delays', (a, b) => policyRank(a) > policyRank(b));
  pick('min_utilization', (a, b) => a > b);
  pick('min_unit_utilization', (a, b) => a > b);
  pick('max_registers', (a, b) => a < b);

  return { effective, notes };
}

function policyRank(p: NegativeDelayPolicy): number {
  return p === 'fail' ? 2 : p === 'retime' ? 1 : 0;
}

/** Applies the rules in force to one analysed design. */
export function applyRules(analysis: Analysis, effective: EffectiveRules): { violations: Violation[]; warnings: Diagnostic[] } {
  const violations: Violation[] = [];
  const warnings: Diagnostic[] = [];

  const negatives: { from: string; to: string; foldedDelay: number; index: number }[] = [];
  analysis.edges.forEach((e, index) => {
    if (e.foldedDelay !== null && e.foldedDelay < 0) negatives.push({ from: e.from, to: e.to, foldedDelay: e.foldedDelay, index });
  });
  const feasible = analysis.retiming.feasible;

  const nd = effective.negative_delays;
  if (nd && negatives.length > 0) {
    const sample = describeEdges(negatives);
    if (nd.value === 'fail') {
      violations.push({
        rule: 'negative_delays',
        source: nd.source,
        limit: 'fail',
        actual: negatives.length,
        message: `${plural(negatives.length, 'edge')} with a negative folded delay (${sample}); the rule forbids them even where retiming would fix them`,
        path: ['edges', negatives[0].index],
      });
    } else if (nd.value === 'retime') {
      if (!feasible) {
        violations.push({
          rule: 'negative_delays',
          source: nd.source,
          limit: 'retime',
          actual: 'no retiming',
          message: `${plural(negatives.length, 'edge')} with a negative folded delay (${sample}) and no retiming makes every folded delay nonnegative${conflictHint(analysis)}`,
          path: ['edges', conflictEdgeIndex(analysis) ?? negatives[0].index],
        });
      }
    } else {
      warnings.push({
        severity: 'warning',
        code: RULE_WARNING_CODES.negativeDelay,
        message: `${plural(negatives.length, 'edge')} with a negative folded delay (${sample}); ${feasible ? 'retiming fixes them' : 'no retiming fixes them'} (negative_delays: warn, not failing)`,
        line: null,
        column: null,
        // The first such edge, so the warning has a place in the file.
        path: ['edges', negatives[0].index],
      });
    }
  } else if (nd && !feasible) {
    // No negative folded delay yet infeasible: a tap into an output that retiming cannot keep
    // nonnegative, or a fixed-latency boundary. The plan still cannot be built.
    if (nd.value === 'warn') {
      warnings.push({
        severity: 'warning',
        code: RULE_WARNING_CODES.negativeDelay,
        message: `no retiming satisfies the boundary conditions of this plan${conflictHint(analysis)} (negative_delays: warn, not failing)`,
        line: null,
        column: null,
      });
    } else {
      violations.push({
        rule: 'negative_delays',
        source: nd.source,
        limit: nd.value,
        actual: 'no retiming',
        message: `no retiming satisfies the boundary conditions of this plan${conflictHint(analysis)}`,
        path: conflictEdgeIndex(analysis) !== null ? ['edges', conflictEdgeIndex(analysis)!] : ['folding'],
      });
    }
  }

  const mu = effective.min_utilization;
  if (mu && analysis.utilization.overall < mu.value - 1e-12) {
    violations.push({
      rule: 'min_utilization',
      source: mu.source,
      limit: mu.value,
      actual: round(analysis.utilization.overall),
      message: `utilization ${pct(analysis.utilization.overall)} is below the minimum ${pct(mu.value)}`,
      path: ['folding', 'sets'],
    });
  }

  const muu = effective.min_unit_utilization;
  if (muu) {
    for (const [unit, u] of Object.entries(analysis.utilization.units)) {
      if (u < muu.value - 1e-12) {
        violations.push({
          rule: 'min_unit_utilization',
          source: muu.source,
          limit: muu.value,
          actual: round(u),
          unit,
          message: `unit ${unit} is busy ${pct(u)} of the time, below the minimum ${pct(muu.value)}`,
          path: ['folding', 'sets', unit],
        });
      }
    }
  }

  const mr = effective.max_registers;
  if (mr) {
    if (analysis.registers) {
      if (analysis.registers.minimum > mr.value) {
        violations.push({
          rule: 'max_registers',
          source: mr.source,
          limit: mr.value,
          actual: analysis.registers.minimum,
          message: `the folded datapath needs at least ${analysis.registers.minimum} registers (lifetime analysis), more than the maximum ${mr.value}`,
          // Registers belong to the datapath as a whole, not to the folding factor: the units list.
          path: ['units'],
        });
      }
    } else {
      warnings.push({
        severity: 'warning',
        code: RULE_WARNING_CODES.notChecked,
        message:
          analysis.retiming.applied === false
            ? 'max_registers not checked: the plan as written has negative folded delays and negative_delays: fail forbids retiming, so there is no register count'
            : 'max_registers not checked: no feasible folded datapath exists, so there is no register count',
        line: null,
        column: null,
        path: ['units'],
      });
    }
  }

  // Whatever the rules: a register count that is not proven minimal is said in every report.
  if (analysis.retiming.registersProven === false) {
    warnings.push({
      severity: 'warning',
      code: RULE_WARNING_CODES.registersNotProven,
      message: 'the retiming is not proven to need the fewest registers: a search for them ran out of its work budget, so the register counts may be above the minimum',
      line: null,
      column: null,
    });
  }

  return { violations, warnings };
}

/** Index in the design's edge list of the first conflicting edge of the blocking loop, if any. */
function conflictEdgeIndex(analysis: Analysis): number | null {
  const c = analysis.retiming.conflict;
  const first = c?.conflictingEdges[0] ?? c?.edges[0];
  if (!first) return null;
  const i = analysis.edges.findIndex((e) => e.from === first.from && e.to === first.to && e.foldedDelay === first.foldedDelay);
  return i >= 0 ? i : null;
}

function describeEdges(edges: { from: string; to: string; foldedDelay: number }[]): string {
  const shown = edges.slice(0, 3).map((e) => `${e.from} -> ${e.to}: ${e.foldedDelay}`);
  return edges.length > 3 ? `${shown.join(', ')}, ...` : shown.join(', ');
}

function conflictHint(analysis: Analysis): string {
  const c = analysis.retiming.conflict;
  if (!c || c.edges.length === 0) return '';
  const nodes = [c.edges[0].from, ...c.edges.map((e) => e.to)];
  const loop = nodes.length > 8 ? `${nodes.slice(0, 7).join(' -> ')} -> ...` : nodes.join(' -> ');
  const need = c.minFactor !== null && c.minFactor > analysis.factor ? `; it needs N >= ${c.minFactor}` : '';
  return `: loop ${loop}${need}`;
}

function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? '' : 's'}`;
}

function pct(x: number): string {
  const v = Math.round(x * 1000) / 10;
  return `${v}%`;
}

function round(x: number): number {
  return Math.round(x * 1e6) / 1e6;
}

function show(v: unknown): string {
  if (typeof v === 'string') return JSON.stringify(v);
  if (v === null || v === undefined) return 'nothing';
  if (typeof v === 'object') return Array.isArray(v) ? 'a list' : 'a mapping';
  return String(v);
}
