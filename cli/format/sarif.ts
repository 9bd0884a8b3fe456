// SARIF 2.1.0 (OASIS Static Analysis Results Interchange Format), built with node-sarif-builder:
// one run, a rule for every validation code and every rule of Pleat (with help text), one result
// per finding with its fixes in the message. Locations are relative to the repository's work
// tree (uriBaseId SRCROOT); a design outside the work tree gets no location and says where it is.
import { SarifBuilder, SarifResultBuilder, SarifRuleBuilder, SarifRunBuilder } from 'node-sarif-builder';
import { allRuleIds, findingKey, reportFindings, ruleHelp, type Finding } from '../../shared/report/findings';
import type { Report } from '../../shared/types';
import type { FormatContext } from './common';
import { escapeControlsDeep } from './escape';

/** The result's text: the message, where a design outside the work tree is, and the fixes. */
export function findingText(f: Finding, outside: string | null): string {
  const who = f.design ? `${f.design}: ` : '';
  const where = outside ? ` (the design file ${outside} is outside the repository's work tree)` : '';
  const fixes = f.fixes.length ? `\nFix: ${f.fixes.join('\nFix: ')}` : '';
  return `${who}${f.message}${where}${fixes}`;
}

export function formatSarif(raw: Report, ctx: FormatContext = {}): string {
  const report = escapeControlsDeep(raw);
  const repoFile = ctx.repositoryFile ?? ((f: string) => f);
  const absolute = ctx.absoluteFile ?? ((f: string) => f);
  const builder = new SarifBuilder();
  const run = new SarifRunBuilder().initSimple({ toolDriverName: 'pleat', toolDriverVersion: report.tool.version });
  for (const id of allRuleIds()) {
    const h = ruleHelp(id);
    run.addRule(new SarifRuleBuilder({ id, name: id.replace(/[^A-Za-z0-9]+/g, '_'), shortDescription: { text: h.short }, fullDescription: { text: h.help }, help: { text: h.help } }));
  }
  // Under `check --baseline`: SARIF's own baselineState says which broken rules are new.
  const b = ctx.baseline?.outcome;
  const state = new Map<string, 'new' | 'unchanged' | 'updated'>();
  for (const f of b?.baselined ?? []) state.set(findingKey(f), 'unchanged');
  for (const f of b?.fresh ?? []) state.set(findingKey(f), 'new');
  for (const w of b?.worse ?? []) state.set(findingKey(w.finding), 'updated');
  for (const f of reportFindings(report)) {
    const rel = repoFile(f.file);
    const result = new SarifResultBuilder().initSimple({
      level: f.severity === 'error' ? 'error' : 'warning',
      ruleId: f.ruleId,
      messageText: findingText(f, rel === null ? absolute(f.file) : null),
    });
    if (rel !== null) {
      result.result.locations = [
        {
          physicalLocation: {
            artifactLocation: { uri: encodeURI(rel), uriBaseId: 'SRCROOT' },
            ...(f.line ? { region: { startLine: f.line, ...(f.column ? { startColumn: f.column } : {}) } } : {}),
          },
        },
      ];
    }
    // Same finding on another run = same fingerprint (design, rule, subject: no line).
    result.result.partialFingerprints = { pleatFinding: [f.design ?? f.file, f.ruleId, f.subject].join('|') };
    const s = state.get(findingKey(f));
    if (s) result.result.baselineState = s;
    run.addResult(result);
  }
  builder.addRun(run);
  // The builder adds the artifacts list and the rule and artifact indexes.
  const log = builder.buildSarifOutput();
  return `${JSON.stringify(log, null, 2)}\n`;
}
