// Writes a plan back into the text of its design file for `pleat plan --write`. The yaml
// package's Document API finds where `folding.sets`, `folding.factor` and `units` sit; only those
// lines are replaced, so every other byte of the file (comments, spacing, key order) is kept.
// Printing the whole document again would reformat lines the plan does not touch.
import { isCollection, isMap, isPair, isScalar, isSeq, parseDocument, type Document, type Node, type Pair, type YAMLMap } from 'yaml';
import { load as loadYaml } from 'js-yaml';
import type { Unit } from '../types';

export interface PlanEdit {
  sets: Record<string, (string | null)[]>;
  /** Written when given and different from the file's value. */
  factor?: number;
  /** Written when given and different from the file's units (ids, kinds or stages). */
  units?: Unit[];
}

export interface WriteBackResult {
  text: string;
  /** 1-based line ranges of the result that were written (inclusive), in file order. */
  edited: { from: number; to: number; what: 'sets' | 'factor' | 'units' | 'folding' }[];
  /** 1-based line ranges of the original text that were replaced (inclusive; empty when inserted). */
  replaced: { from: number; to: number }[];
}

/** Thrown for a file whose structure the splice cannot handle; the CLI turns it into exit 2. */
export class WriteBackError extends Error {}

interface Splice {
  start: number;
  end: number;
  text: string;
  what: WriteBackResult['edited'][number]['what'];
}

/**
 * `window: false` parses the whole file with the Document API; by default only the top-level
 * entries the edit touches (`folding`, and `units` when given) are parsed, cut out of the text
 * at their column-0 key lines, and the rest of the file is never parsed: on a design of 100,000
 * edges the Document API of the whole file costs over ten seconds and a gigabyte. Files whose
 * top level cannot be cut safely (directives, document markers, tabs, anything at column 0 that
 * is not a `key:` line or a comment, anchors or aliases in the cut entries) take the whole-file path.
 */
export function writeBack(original: string, edit: PlanEdit, options: { window?: boolean } = {}): WriteBackResult {
  const keys = edit.units ? ['units', 'folding'] : ['folding'];
  const win = options.window === false ? null : topLevelWindow(original, keys);
  if (win) {
    // The design has been loaded (and its keys checked) before it is planned; the yaml package's
    // duplicate-key check is quadratic in a mapping's keys (thousands of units in large designs).
    const doc = parseDocument(win.text, { keepSourceTokens: false, uniqueKeys: false });
    if (doc.errors.length === 0 && isMap(doc.contents) && !doc.contents.flow) {
      const splices = planSplices(win.text, doc, edit).map((s) => ({ ...s, start: win.toOriginal(s.start, s.end > s.start ? 'start' : 'end'), end: win.toOriginal(s.end, 'end') }));
      return apply(original, splices, edit, eolOf(original), keys);
    }
  }
  const doc = parseDocument(original, { keepSourceTokens: false });
  if (doc.errors.length > 0) throw new WriteBackError(`the file is not valid YAML: ${doc.errors[0].message.split('\n')[0]}`);
  return apply(original, planSplices(original, doc, edit), edit, eolOf(original), null);
}

const eolOf = (text: string) => (text.includes('\r\n') ? '\r\n' : '\n');

/** A plain top-level key at column 0: `name:` followed by a space, a comment or the line's end. */
const TOP_KEY = /^([A-Za-z_][A-Za-z0-9_.-]*)[ ]*:(?=[ \t\r\n]|$)/;

interface Window {
  /** The chosen top-level entries, in file order, each from its key line to the next key line. */
  text: string;
  /** Position in `text` to position in the original, as the start or the end of a range. */
  toOriginal: (pos: number, side: 'start' | 'end') => number;
}

/**
 * The text of the given top-level entries of a block-mapping document, or null when the top
 * level cannot be cut by lines with certainty or a key is missing or repeated (the caller then
 * parses the whole file, which also reports what is wrong).
 */
export function topLevelWindow(text: string, keys: string[]): Window | null {
  if (text.charCodeAt(0) === 0xfeff) return null;
  const starts: { key: string; at: number }[] = [];
  for (let at = 0; at < text.length; ) {
    const nl = text.indexOf('\n', at);
    const end = nl < 0 ? text.length : nl + 1;
    const c = text[at];
    if (c !== ' ' && c !== '#' && c !== '\n' && c !== '\r') {
      const m = TOP_KEY.exec(text.slice(at, Math.min(end, at + 200)));
      if (!m) return null; // a directive, a document marker, a tab, a flow or quoted key, a sequence item
      starts.push({ key: m[1], at });
    }
    at = end;
  }
  if (starts.length === 0) return null;
  const segments: { from: number; to: number; at: number }[] = [];
  let sub = '';
  for (const key of keys) if (starts.filter((s) => s.key === key).length !== 1) return null;
  starts.forEach((s, i) => {
    if (!keys.includes(s.key)) return;
    const to = i + 1 < starts.length ? starts[i + 1].at : text.length;
    segments.push({ from: s.at, to, at: sub.length });
    sub += text.slice(s.at, to);
  });
  // anchors or aliases could tie a cut entry to the rest of the file
  if (/[&*]/.test(sub.replace(/#[^\n]*/g, ''))) return null;
  if (sub.length && !sub.endsWith('\n') && segments[segments.length - 1].to !== text.length) return null;
  return {
    text: sub,
    toOriginal: (pos, side) => {
      // a start belongs to the entry it begins in, an end to the entry it closes
      for (const g of segments) {
        const len = g.to - g.from;
        if (side === 'start' ? pos >= g.at && pos < g.at + len : pos > g.at && pos <= g.at + len) return g.from + (pos - g.at);
      }
      return pos === 0 ? segments[0].from : segments[segments.length - 1].to;
    },
  };
}

/** The splices of the edit, in positions of `original` (the text `doc` was parsed from). */
function planSplices(original: string, doc: Document, edit: PlanEdit): Splice[] {
  const eol = eolOf(original);
  const root = doc.contents;
  if (!isMap(root) || root.flow) throw new WriteBackError('the design is not a block mapping at the top level; write the plan with --out instead');

  const splices: Splice[] = [];
  const folding = pairOf(root, 'folding');

  if (edit.units && unitsDiffer(doc, edit.units)) {
    const pair = pairOf(root, 'units');
    if (!pair) throw new WriteBackError('the design has no `units` to rewrite');
    const fine = unitSplices(original, pair, edit.units, eol);
    if (fine) splices.push(...fine);
    else {
      const keyColumn = columnOf(original, (pair.key as Node).range![0]);
      const indent = itemIndent(original, pair.value, keyColumn + 2) - keyColumn;
      splices.push(replacePair(original, pair, edit.units.length ? `units:${eol}${renderUnits(edit.units, eol, Math.max(0, indent))}` : 'units: []', 'units'));
    }
  }

  if (!folding || folding.value === null || (isScalar(folding.value) && folding.value.value === null)) {
    // No folding at all (or an empty one): one new block with the factor and the sets.
    if (edit.factor === undefined) throw new WriteBackError('the design has no `folding.factor`; give --factor');
    const block = ['folding:', `  factor: ${edit.factor}`, ...setsBlock(edit.sets, '  ').map((l) => `  ${l}`)].join(eol);
    if (folding) splices.push(replacePair(original, folding, block, 'folding'));
    else splices.push(appendAtEnd(original, block, eol));
  } else {
    const fmap = folding.value;
    if (!isMap(fmap)) throw new WriteBackError('`folding` is not a mapping');
    const flow = !!fmap.flow;
    const factorPair = pairOf(fmap, 'factor');
    if (edit.factor !== undefined) {
      const current = factorPair && isScalar(factorPair.value) ? factorPair.value.value : undefined;
      if (current !== edit.factor) {
        if (factorPair && isScalar(factorPair.value) && factorPair.value.range && factorPair.value.source !== '') {
          // The scalar alone is replaced: a comment after it on the same line stays.
          const [s, e] = factorPair.value.range;
          splices.push({ start: s, end: e, text: String(edit.factor), what: 'factor' });
        } else if (flow) {
          throw new WriteBackError('`folding` is written in flow style without a factor; write the plan with --out instead');
        } else {
          splices.push(insertInBlockMap(original, fmap, [`factor: ${edit.factor}`], eol, 'factor'));
        }
      }
    }
    const setsPair = pairOf(fmap, 'sets');
    if (flow) {
      const rendered = renderSetsFlow(edit.sets);
      if (setsPair && setsPair.value && (setsPair.value as Node).range) {
        const [s, e] = (setsPair.value as Node).range!;
        splices.push({ start: s, end: e, text: rendered, what: 'sets' });
      } else {
        // Insert `, sets: {...}` before the closing brace of the flow mapping.
        const close = original.lastIndexOf('}', fmap.range![1]);
        if (close < 0) throw new WriteBackError('cannot find the end of `folding`');
        const sep = fmap.items.length ? ', ' : ' ';
        splices.push({ start: close, end: close, text: `${sep}sets: ${rendered} `, what: 'sets' });
      }
    } else if (setsPair) {
      const keyColumn = columnOf(original, (setsPair.key as Node).range![0]);
      const indent = itemIndent(original, setsPair.value, keyColumn + 2) - keyColumn;
      splices.push(replacePair(original, setsPair, setsBlock(edit.sets, ' '.repeat(Math.max(1, indent))).join(eol), 'sets'));
    } else {
      splices.push(insertInBlockMap(original, fmap, setsBlock(edit.sets, '  '), eol, 'sets'));
    }
  }

  return splices;
}

// ---------------------------------------------------------------- rendering

const PLAIN = /^[A-Za-z_][A-Za-z0-9._-]*$/;
const RESERVED = /^(null|true|false|yes|no|on|off|y|n)$/i;

/** A node or unit id as YAML: plain when that reads back as the same string, else double-quoted. */
export function yamlId(id: string): string {
  return PLAIN.test(id) && !RESERVED.test(id) ? id : JSON.stringify(id);
}

function renderList(list: (string | null)[]): string {
  return `[${list.map((v) => (v === null ? '~' : yamlId(v))).join(', ')}]`;
}

/**
 * `sets:` and one `UNIT: [a, ~, b]` line per unit, each `indent` deeper than the key; lines are
 * relative to the key's own column (the caller's splice starts at the key).
 */
function setsBlock(sets: Record<string, (string | null)[]>, indent: string): string[] {
  const entries = Object.entries(sets);
  if (entries.length === 0) return ['sets: {}'];
  return ['sets:', ...entries.map(([unit, list]) => `${indent}${yamlId(unit)}: ${renderList(list)}`)];
}

function renderSetsFlow(sets: Record<string, (string | null)[]>): string {
  const entries = Object.entries(sets).map(([unit, list]) => `${yamlId(unit)}: ${renderList(list)}`);
  return entries.length ? `{ ${entries.join(', ')} }` : '{}';
}

function renderUnits(units: Unit[], eol: string, indent: number): string {
  const pad = ' '.repeat(indent);
  return units.map((u) => `${pad}- { id: ${yamlId(u.id)}, kind: ${yamlId(u.kind)}, stages: ${u.stages} }`).join(eol);
}

/**
 * When the new units are the old ones (unchanged, same order) with some dropped and some added,
 * only the lines of the dropped units go and new lines come after the last unit of their kind:
 * the kept units' lines, comments included, stay as written. Null: rewrite the whole list.
 */
function unitSplices(text: string, pair: Pair<Node, Node | null>, units: Unit[], eol: string): Splice[] | null {
  const seq = pair.value;
  if (!seq || !isSeq(seq) || seq.flow || seq.items.length === 0) return null;
  const items = seq.items as Node[];
  const old = items.map((n) => (isMap(n) ? (n.toJSON() as Record<string, unknown>) : null));
  if (old.some((u) => !u || typeof u.id !== 'string')) return null;
  const byId = new Map(units.map((u) => [u.id, u]));
  const kept = old.filter((u) => byId.has(u!.id as string));
  for (const u of kept) {
    const n = byId.get(u!.id as string)!;
    if (u!.kind !== n.kind || ((u!.stages as number | undefined) ?? 0) !== n.stages) return null;
  }
  const keptIds = kept.map((u) => u!.id as string);
  const newKept = units.filter((u) => old.some((o) => o!.id === u.id)).map((u) => u.id);
  if (keptIds.join('\0') !== newKept.join('\0')) return null;
  // Each item must start its own line (`- ...`) and end on its own line.
  const starts = items.map((n) => lineStart(text, n.range![0]));
  if (items.some((n, i) => !/^[ ]*-[ ]+$/.test(text.slice(starts[i], n.range![0])))) return null;
  const column = items[0].range![0] - starts[0] - 2;
  const out: Splice[] = [];
  const lineAfter = (n: Node) => {
    let end = contentEnd(n, n.range![1]);
    while (/\s/.test(text[end - 1])) end--;
    const e = lineEnd(text, end - 1);
    return e < text.length ? e + 1 : e;
  };
  items.forEach((n, i) => {
    if (!byId.has(old[i]!.id as string)) out.push({ start: starts[i], end: lineAfter(n), text: '', what: 'units' });
  });
  const added = units.filter((u) => !old.some((o) => o!.id === u.id));
  const groups = new Map<number, Unit[]>();
  for (const u of added) {
    let at = -1;
    old.forEach((o, i) => {
      if (byId.has(o!.id as string) && o!.kind === u.kind) at = i;
    });
    if (at < 0) at = old.reduce((last, o, i) => (byId.has(o!.id as string) ? i : last), items.length - 1);
    groups.set(at, [...(groups.get(at) ?? []), u]);
  }
  for (const [at, list] of groups) {
    const pos = lineAfter(items[at]);
    const atEnd = pos === text.length && !text.endsWith('\n');
    const body = renderUnits(list, eol, Math.max(0, column)).split(eol).map((l) => `${l}${eol}`).join('');
    if (atEnd) out.push({ start: pos, end: pos, text: `${eol}${body.slice(0, -eol.length)}`, what: 'units' });
    else out.push({ start: pos, end: pos, text: body, what: 'units' });
  }
  return out;
}

// ---------------------------------------------------------------- locating

function pairOf(map: YAMLMap, key: string): Pair<Node, Node | null> | null {
  for (const item of map.items) {
    if (isPair(item) && isScalar(item.key) && item.key.value === key) return item as Pair<Node, Node | null>;
  }
  return null;
}

function unitsDiffer(doc: Document, units: Unit[]): boolean {
  const now = doc.toJS()?.units;
  if (!Array.isArray(now) || now.length !== units.length) return true;
  return units.some((u, i) => {
    const v = now[i] as Record<string, unknown> | null;
    return !v || v.id !== u.id || v.kind !== u.kind || (v.stages ?? 0) !== u.stages;
  });
}

function lineStart(text: string, pos: number): number {
  return text.lastIndexOf('\n', pos - 1) + 1;
}

function lineEnd(text: string, pos: number): number {
  const n = text.indexOf('\n', pos);
  return n < 0 ? text.length : n;
}

function columnOf(text: string, pos: number): number {
  return pos - lineStart(text, pos);
}

/** Where the last content of a node ends: trailing comments and blank lines of a block collection are not its content. */
function contentEnd(node: Node | null | undefined, fallback: number): number {
  if (!node || !node.range) return fallback;
  if (isCollection(node) && !node.flow && node.items.length > 0) {
    const last = node.items[node.items.length - 1];
    if (isPair(last)) return contentEnd((last.value as Node | null) ?? (last.key as Node), node.range[1]);
    return contentEnd(last as Node, node.range[1]);
  }
  return node.range[1];
}

/** Column of the items of an existing block collection, else the fallback. */
function itemIndent(text: string, node: Node | null | undefined, fallback: number): number {
  if (node && isCollection(node) && !node.flow && node.items.length > 0 && node.range) {
    const start = lineStart(text, node.range[0]);
    if (/^[ ]*$/.test(text.slice(start, node.range[0]))) return node.range[0] - start;
  }
  return fallback;
}

function childIndentOf(text: string, map: YAMLMap): string {
  return ' '.repeat(columnOf(text, map.range![0]));
}

/**
 * Replaces a block-map pair from its key to the end of the line where its value's content ends
 * (a comment after the value on that line goes with it; the lines before and after stay).
 * `replacement` starts at the key's column; its further lines carry their own indentation.
 */
function replacePair(text: string, pair: Pair<Node, Node | null>, replacement: string, what: Splice['what']): Splice {
  const key = pair.key as Node;
  const keyStart = key.range![0];
  if (!/^[ ]*$/.test(text.slice(lineStart(text, keyStart), keyStart))) {
    throw new WriteBackError(`\`${String((key as { value?: unknown }).value)}\` does not start its own line; write the plan with --out instead`);
  }
  let end = contentEnd(pair.value, key.range![1]);
  while (end > keyStart && /\s/.test(text[end - 1])) end--;
  end = lineEnd(text, Math.max(end - 1, keyStart));
  // Keep a CR of a CRLF line ending outside the replaced range.
  if (text[end - 1] === '\r') end--;
  // Continuation lines are indented relative to the key's column.
  const pad = ' '.repeat(columnOf(text, keyStart));
  const eol = text.includes('\r\n') ? '\r\n' : '\n';
  const lines = replacement.split(eol);
  return { start: keyStart, end, text: [lines[0], ...lines.slice(1).map((l) => `${pad}${l}`)].join(eol), what };
}

/** A new `key: value` line (or block) after the last content of a block mapping, at its indentation. */
function insertInBlockMap(text: string, map: YAMLMap, lines: string[], eol: string, what: Splice['what']): Splice {
  const indent = childIndentOf(text, map);
  let end = contentEnd(map, map.range![1]);
  while (end > map.range![0] && /\s/.test(text[end - 1])) end--;
  end = lineEnd(text, end - 1);
  if (text[end - 1] === '\r') end--;
  return { start: end, end, text: `${eol}${lines.map((l) => `${indent}${l}`).join(eol)}`, what };
}

function appendAtEnd(text: string, block: string, eol: string): Splice {
  const sep = text.length === 0 || text.endsWith('\n') ? '' : eol;
  return { start: text.length, end: text.length, text: `${sep}${block}${eol}`, what: 'folding' };
}

// ---------------------------------------------------------------- applying

function lineOf(text: string, pos: number): number {
  let n = 1;
  for (let i = text.indexOf('\n'); i >= 0 && i < pos; i = text.indexOf('\n', i + 1)) n++;
  return n;
}

/** Applies the splices; the result is read back (the windowed entries when `keys` is given, else the whole file). */
function apply(original: string, splices: Splice[], edit: PlanEdit, eol: string, keys: string[] | null): WriteBackResult {
  splices.sort((a, b) => a.start - b.start);
  for (let i = 1; i < splices.length; i++) {
    if (splices[i].start < splices[i - 1].end) throw new WriteBackError('the edits overlap; write the plan with --out instead');
  }
  let out = '';
  let at = 0;
  const edited: WriteBackResult['edited'] = [];
  const replaced: WriteBackResult['replaced'] = [];
  for (const s of splices) {
    out += original.slice(at, s.start);
    const startLine = lineOf(out, out.length) + (s.text.startsWith(eol) ? 1 : 0);
    out += s.text;
    // A text that ends with a line break ends on the line before the one the cursor is now on.
    if (s.text !== '') edited.push({ from: startLine, to: lineOf(out, out.length) - (s.text.endsWith('\n') ? 1 : 0), what: s.what });
    if (s.end > s.start) replaced.push({ from: lineOf(original, s.start), to: lineOf(original, s.end - 1) });
    at = s.end;
  }
  out += original.slice(at);

  // Read the result back with the reader `pleat check` uses (js-yaml): the plan must be exactly
  // what the file now says (only the windowed entries when the edit was windowed).
  const win = keys ? topLevelWindow(out, keys) : null;
  let js: { folding?: { factor?: number; sets?: unknown }; units?: unknown } | null;
  try {
    js = loadYaml(win ? win.text : out) as typeof js;
  } catch (e) {
    throw new WriteBackError(`the rewritten file would not be valid YAML (${(e as Error).message.split('\n')[0]}); write the plan with --out instead`);
  }
  const setsNow = js?.folding?.sets ?? {};
  if (JSON.stringify(setsNow) !== JSON.stringify(edit.sets)) throw new WriteBackError('the rewritten sets would not read back as planned; write the plan with --out instead');
  if (edit.factor !== undefined && js?.folding?.factor !== edit.factor) throw new WriteBackError('the rewritten factor would not read back as planned');
  return { text: out, edited, replaced };
}
