// The server's use of the engine: one design text in, the same DesignReport the CLI writes out,
// through the engine's one pipeline (shared/pipeline.ts). Used by POST /api/analyze and the demo seed.
import { runDesignText } from '../shared/pipeline';
import { mergeRules } from '../shared/report/rules';
import type { DesignReport, EffectiveRules, Rules } from '../shared/types';

export function checkDesignText(text: string, file: string, teamRules: Rules | null, repoRules: Rules | null = null): { design: DesignReport; rules: EffectiveRules } {
  const { effective } = mergeRules(teamRules, repoRules);
  return { design: runDesignText(text, file, { rules: effective }).report, rules: effective };
}
