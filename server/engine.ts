// The server's use of the engine: one design text in, the same DesignReport the CLI writes out.
// Used by POST /api/analyze and by the demo seed.
import { analyze } from '../shared/analyze';
import { withControl } from '../shared/control';
import { loadDesign } from '../shared/load';
import { designReport } from '../shared/report';
import { applyRules, mergeRules } from '../shared/rules';
import type { DesignReport, EffectiveRules, Rules } from '../shared/types';

export function checkDesignText(text: string, file: string, teamRules: Rules | null, repoRules: Rules | null = null): { design: DesignReport; rules: EffectiveRules } {
  const { effective } = mergeRules(teamRules, repoRules);
  const loaded = loadDesign(text);
  if (!loaded.design) {
    return { design: designReport({ file, name: nameOfInvalid(text), diagnostics: loaded.diagnostics, analysis: null }), rules: effective };
  }
  const analysis = withControl(loaded.design, analyze(loaded.design));
  const { violations, warnings } = applyRules(analysis, effective);
  return {
    design: designReport({ file, name: loaded.design.name, diagnostics: loaded.diagnostics, analysis, violations, ruleWarnings: warnings }),
    rules: effective,
  };
}

/**
 * The name of a design that did not load, from its top-level `name:` line, as the CLI reports it
 * (cli/commands/check.ts does the same; a shared helper in shared/ would let both use one).
 */
function nameOfInvalid(text: string): string | null {
  const m = /^name:[ \t]*(["']?)([A-Za-z0-9._-]+)\1[ \t]*(#.*)?$/m.exec(text);
  return m ? m[2]! : null;
}
