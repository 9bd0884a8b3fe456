// The server's use of the engine: one design text in, the same DesignReport the CLI writes out.
// Used by POST /api/analyze and by the demo seed.
import { analyze } from '../shared/analyze';
import { withControl } from '../shared/control';
import { loadDesign, nameOfInvalidDesign } from '../shared/load';
import { designReport } from '../shared/report';
import { applyRules, mergeRules } from '../shared/rules';
import type { DesignReport, EffectiveRules, Rules } from '../shared/types';

export function checkDesignText(text: string, file: string, teamRules: Rules | null, repoRules: Rules | null = null): { design: DesignReport; rules: EffectiveRules } {
  const { effective } = mergeRules(teamRules, repoRules);
  const loaded = loadDesign(text);
  if (!loaded.design) {
    return { design: designReport({ file, name: nameOfInvalidDesign(text), diagnostics: loaded.diagnostics, analysis: null }), rules: effective };
  }
  // Under negative_delays: fail nothing is retimed: the plan is judged as written (as the CLI does).
  const analysis = withControl(loaded.design, analyze(loaded.design, { retime: effective.negative_delays?.value !== 'fail' }));
  const { violations, warnings } = applyRules(analysis, effective);
  return {
    design: designReport({ file, name: loaded.design.name, diagnostics: loaded.diagnostics, analysis, violations, ruleWarnings: warnings }),
    rules: effective,
  };
}
