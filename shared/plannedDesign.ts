// Writes a plan back into its design file. The yaml package's Document API finds where
// folding.sets (and folding.factor and units, when the plan changed them) sit in the text; only
// those byte ranges are replaced, so every comment and every other byte of the file stays as
// the engineer wrote it.
import { isMap, isScalar, isSeq, parseDocument, type Node as YamlNode } from 'yaml';
import type { Unit } from './types';

export interface PlanToWrite {
  factor: number;
  units: Unit[];
  sets: Record<string, (string | null)[]>;
}

const plain = (s: string) => (/^[A-Za-z_][\w.-]*$/.test(s) && !/^(true|false|null|yes|no|on|off)$/i.test(s) ? s : JSON.stringify(s));
const setLine = (unit: string, slots: (string | null)[]) => `${plain(unit)}: [${slots.map((s) => (s === null ? '~' : plain(s))).join(', ')}]`;
const unitLine = (u: Unit) => `- { id: ${plain(u.id)}, kind: ${plain(u.kind)}, stages: ${u.stages} }`;

function columnOf(text: string, offset: number): number {
  return offset - (text.lastIndexOf('\n', offset - 1) + 1);
}

function sameUnits(a: Unit[], b: Unit[]): boolean {
  return a.length === b.length && a.every((u, i) => u.id === b[i]!.id && u.kind === b[i]!.kind && u.stages === b[i]!.stages);
}

interface Edit { from: number; to: number; text: string }

/**
 * The design text with the plan in it; `current` is the design as loaded, so that an unchanged
 * factor or unit list is not touched. Null when the text has no block mapping at its root or no
 * `folding:` (a design the planner could not have loaded).
 */
export function withPlan(text: string, plan: PlanToWrite, current: { factor: number; units: Unit[] }): string | null {
  const doc = parseDocument(text);
  const root = doc.contents;
  if (!isMap(root) || root.flow) return null;
  const foldingPair = root.items.find((p) => isScalar(p.key) && p.key.value === 'folding');
  const folding = foldingPair?.value;
  if (!foldingPair || !isMap(folding) || folding.flow || !folding.range) return null;
  const edits: Edit[] = [];
  const keyIndent = columnOf(text, folding.range[0]);
  const pad = ' '.repeat(keyIndent);
  const entries = Object.entries(plan.sets);

  const setsPair = folding.items.find((p) => isScalar(p.key) && p.key.value === 'sets');
  const setsNode = setsPair?.value as YamlNode | null | undefined;
  if (setsNode && isMap(setsNode) && !setsNode.flow && setsNode.range && setsNode.items.length > 0) {
    // A block map: its first key sits at the range's start, so the lines follow at that column.
    const inner = ' '.repeat(columnOf(text, setsNode.range[0]));
    edits.push({ from: setsNode.range[0], to: setsNode.range[1], text: entries.map(([u, s]) => setLine(u, s)).join(`\n${inner}`) });
  } else {
    const block = entries.map(([u, s]) => `\n${pad}  ${setLine(u, s)}`).join('');
    if (setsPair && isScalar(setsPair.key) && setsPair.key.range) {
      // `sets:` with nothing, `~` or `{}`: everything after the key's colon on that line goes.
      const colon = text.indexOf(':', setsPair.key.range[1]);
      const to = setsNode && (setsNode as { range?: [number, number, number] }).range ? (setsNode as { range: [number, number, number] }).range[1] : colon + 1;
      edits.push({ from: colon + 1, to, text: block });
    } else {
      const end = folding.range[1];
      edits.push({ from: end, to: end, text: `${text[end - 1] === '\n' ? '' : '\n'}${pad}sets:${block}\n`.replace(/^\n/, text[end - 1] === '\n' ? '' : '\n') });
    }
  }

  if (plan.factor !== current.factor) {
    const factor = folding.items.find((p) => isScalar(p.key) && p.key.value === 'factor')?.value;
    if (isScalar(factor) && factor.range) edits.push({ from: factor.range[0], to: factor.range[1], text: String(plan.factor) });
    else edits.push({ from: folding.range[0], to: folding.range[0], text: `factor: ${plan.factor}\n${pad}` });
  }

  if (!sameUnits(plan.units, current.units)) {
    const units = root.items.find((p) => isScalar(p.key) && p.key.value === 'units')?.value;
    if (isSeq(units) && !units.flow && units.range && units.items.length > 0) {
      const inner = ' '.repeat(columnOf(text, units.range[0]));
      edits.push({ from: units.range[0], to: units.range[1], text: plan.units.map(unitLine).join(`\n${inner}`) });
    } else {
      return null;
    }
  }

  let out = text;
  for (const e of edits.sort((a, b) => b.from - a.from)) {
    // A block collection's range runs through its last line break: keep that break.
    const tail = /\n\s*$/.exec(text.slice(e.from, e.to))?.[0] ?? '';
    out = out.slice(0, e.from) + e.text + (e.text.endsWith('\n') ? '' : tail) + out.slice(e.to);
  }
  return out;
}
