// Reading a design for `pleat plan` and `pleat sweep`: the file may have partial or no folding
// sets (they are what the planner fills in); every other rule of the format applies, and its
// problems come back as diagnostics with file, line and column, as `pleat check` gives them.
import { readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import type { Design, Diagnostic, Unit } from '../../shared/types';

export interface ReadDesign {
  abs: string;
  /** As shown to the user: relative to the working directory, forward slashes. */
  file: string;
  text: string | null;
  design: Design | null;
  name: string | null;
  diagnostics: Diagnostic[];
}

export function shownPath(abs: string): string {
  const rel = path.relative(process.cwd(), abs);
  return (rel === '' ? path.basename(abs) : rel).split(path.sep).join('/');
}

/** Loads one design for planning; `factor` replaces folding.factor (and lets a file without `folding:` load). */
export async function readForPlanning(abs: string, factor: number | undefined): Promise<ReadDesign> {
  const { loadDesign, nameOfInvalidDesign, DEFAULT_LIMITS } = await import('../../shared/design/load');
  const file = shownPath(abs);
  const out: ReadDesign = { abs, file, text: null, design: null, name: null, diagnostics: [] };
  try {
    const s = statSync(abs);
    if (!s.isFile()) {
      out.diagnostics.push({ severity: 'error', code: 'file-unreadable', message: 'not a file', line: null, column: null });
      return out;
    }
    if (s.size > DEFAULT_LIMITS.maxBytes) {
      const mib = (n: number) => (n / (1024 * 1024)).toFixed(1);
      out.diagnostics.push({ severity: 'error', code: 'file-too-large', message: `the file is ${mib(s.size)} MiB; the limit is ${mib(DEFAULT_LIMITS.maxBytes)} MiB`, line: 1, column: 1 });
      return out;
    }
    out.text = readFileSync(abs, 'utf8');
  } catch (e) {
    out.diagnostics.push({ severity: 'error', code: 'file-unreadable', message: `cannot read the file: ${(e as Error).message}`, line: null, column: null });
    return out;
  }
  const loaded = loadDesign(out.text, { unplaced: 'allow', ...(factor !== undefined ? { factor } : {}) });
  out.diagnostics = loaded.diagnostics;
  out.design = loaded.design;
  out.name = loaded.design ? loaded.design.name : nameOfInvalidDesign(out.text);
  return out;
}

/**
 * What `pleat check` would say of a planned design text: null when it loads without error and
 * reads back as exactly the planned factor, units and sets. The planner scored that very design
 * with the engine (a feasible retiming, the metrics it reports), so the text is not analysed again.
 */
export async function checkPlanned(text: string, plan: { factor: number; units: Unit[]; sets: Record<string, (string | null)[]> }): Promise<string | null> {
  const { loadDesign } = await import('../../shared/design/load');
  const loaded = loadDesign(text);
  const errors = loaded.diagnostics.filter((d) => d.severity === 'error');
  if (!loaded.design || errors.length) return `the planned file does not load (${errors[0]?.code ?? 'unknown'}: ${errors[0]?.message ?? ''})`;
  const d = loaded.design;
  if (d.folding.factor !== plan.factor) return `the planned file reads back with factor ${d.folding.factor}, not ${plan.factor}`;
  const units = (list: Unit[]) => JSON.stringify(list.map((u) => [u.id, u.kind, u.stages]));
  if (units(d.units) !== units(plan.units)) return 'the planned file reads back with other units than planned';
  const sets = (s: Record<string, (string | null)[]>) => JSON.stringify(Object.keys(s).sort().map((k) => [k, s[k].map((x) => x ?? null)]));
  if (sets(d.folding.sets) !== sets(plan.sets)) return 'the planned file reads back with other folding sets than planned';
  return null;
}
