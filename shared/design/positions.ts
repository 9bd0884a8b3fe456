// Method: maps a diagnostic's document path to the source offset of that value by walking the concrete syntax tree of the `yaml` package's parser (only when there are diagnostics to place).
// Convention: line and column are 1-based, columns count UTF-16 code units; a path that is not in the text falls back to its nearest parent.
import { CST, Parser } from 'yaml';
import type { Diagnostic } from '../types';
import { KEY_CODES } from './diagnostics';

/** One step of a wanted path; only the paths of the diagnostics are kept, so the walk skips the rest. */
interface Trie {
  children: Map<string, Trie> | null;
  keyOffset: number;
  valueOffset: number;
  /** The source text of a plain scalar value, or null. */
  plain: string | null;
}

function newTrie(): Trie {
  return { children: null, keyOffset: -1, valueOffset: -1, plain: null };
}

type Token = CST.Token;
type Item = CST.CollectionItem;

/** Where a value starts: the node itself, else the anchor or tag written in its place (`key: !t`), else -1. */
function valueOffset(value: Token | null | undefined, props: readonly CST.SourceToken[] | undefined): number {
  if (value && value.type !== 'error') {
    if (value.type === 'block-scalar') return value.offset;
    if ('offset' in value) return value.offset;
  }
  if (props) for (const p of props) if (p.type === 'anchor' || p.type === 'tag') return p.offset;
  return -1;
}

/** Records where a value starts and, for a plain scalar, its text as written. */
function setValue(trie: Trie, value: Token | null | undefined, props: readonly CST.SourceToken[] | undefined): void {
  trie.valueOffset = valueOffset(value, props);
  if (value && value.type === 'scalar') trie.plain = value.source;
}

/** The key of a map item as the loader reads it (a scalar's value), or null for a complex key. */
function keyText(key: Token | null | undefined): string | null {
  if (!key) return null;
  if (key.type === 'scalar' || key.type === 'single-quoted-scalar' || key.type === 'double-quoted-scalar' || key.type === 'block-scalar') {
    const r = CST.resolveAsScalar(key);
    return r ? r.value : null;
  }
  return null;
}

/** Descends into the wanted children of a node; a trie without children ends the descent. */
function walkNode(node: Token | null | undefined, trie: Trie): void {
  const children = trie.children;
  if (!children || !node) return;
  if (node.type === 'block-map' || (node.type === 'flow-collection' && node.start.type === 'flow-map-start')) {
    for (const item of node.items as Item[]) {
      const k = keyText(item.key);
      if (k === null) continue;
      const t = children.get(k);
      if (!t) continue;
      t.keyOffset = item.key && 'offset' in item.key ? item.key.offset : -1;
      setValue(t, item.value, item.sep);
      walkNode(item.value, t);
    }
  } else if (node.type === 'block-seq' || node.type === 'flow-collection') {
    const items = node.items as Item[];
    for (let i = 0; i < items.length; i++) {
      const t = children.get(String(i));
      if (!t) continue;
      const item = items[i];
      if (item.key !== undefined || item.sep?.some((s) => s.type === 'map-value-ind')) {
        // `[a: 1]`: a one-pair mapping in a sequence
        t.valueOffset = valueOffset(item.key, item.start);
        const k = keyText(item.key);
        const c = k !== null ? t.children?.get(k) : undefined;
        if (c) {
          c.keyOffset = t.valueOffset;
          setValue(c, item.value, item.sep);
          walkNode(item.value, c);
        }
        continue;
      }
      setValue(t, item.value, item.start);
      walkNode(item.value, t);
    }
  }
}

/** Fills the wanted tries with key and value offsets from the first document of the text. */
function walk(text: string, root: Trie): void {
  for (const token of new Parser().parse(text)) {
    if (token.type !== 'document') continue;
    setValue(root, token.value, token.start);
    walkNode(token.value, root);
    break; // the first document only
  }
}

/** Line and column (1-based) of the first alias (`*name`) of the text's first document, by the same parser; null when there is none. */
export function firstAliasPosition(text: string): [number, number] | null {
  let at = -1;
  const visit = (tok: unknown): void => {
    if (at >= 0 || !tok || typeof tok !== 'object') return;
    if (Array.isArray(tok)) return tok.forEach(visit);
    const t = tok as { type?: string; offset?: number };
    if (t.type === 'alias' && typeof t.offset === 'number') {
      at = t.offset;
      return;
    }
    for (const v of Object.values(tok)) if (v && typeof v === 'object') visit(v);
  };
  for (const token of new Parser().parse(text)) {
    visit(token);
    if (token.type === 'document') break;
  }
  return at < 0 ? null : lineColumns(text, [at]).get(at)!;
}

/** 1-based line and column of each offset, by one scan over the text. */
function lineColumns(text: string, offsets: number[]): Map<number, [number, number]> {
  const sorted = [...new Set(offsets)].sort((a, b) => a - b);
  const result = new Map<number, [number, number]>();
  let line = 1;
  let lineStart = 0;
  let scan = 0;
  for (const off of sorted) {
    const target = Math.min(Math.max(off, 0), text.length);
    for (;;) {
      const nl = text.indexOf('\n', scan);
      if (nl < 0 || nl >= target) break;
      line++;
      lineStart = nl + 1;
      scan = nl + 1;
    }
    result.set(off, [line, target - lineStart + 1]);
  }
  return result;
}

function trieOf(paths: (string | number)[][]): Trie {
  const root = newTrie();
  for (const path of paths) {
    let t = root;
    for (const seg of path) {
      const key = String(seg);
      if (!t.children) t.children = new Map();
      let c = t.children.get(key);
      if (!c) {
        c = newTrie();
        t.children.set(key, c);
      }
      t = c;
    }
  }
  return root;
}

/**
 * The source text of the plain scalar at each path (null where the value is not a plain scalar
 * or the path is not in the text), e.g. a number with more digits than a double keeps.
 */
export function plainScalarTexts(text: string, paths: (string | number)[][]): (string | null)[] {
  const root = trieOf(paths);
  try {
    walk(text, root);
  } catch {
    return paths.map(() => null);
  }
  return paths.map((path) => {
    let t: Trie | undefined = root;
    for (const seg of path) t = t?.children?.get(String(seg));
    return t?.plain ?? null;
  });
}

/**
 * Returns the diagnostics with line and column filled from their `path` (those that already have a
 * line are kept as they are). Never throws: anything it cannot place goes to line 1, column 1.
 * The one YAML position lookup of the project: design files and pleat.config.yaml both use it;
 * `atKey` says which findings point at the key rather than its value (design codes by default).
 */
export function locate(text: string, diagnostics: Diagnostic[], atKey: (d: Diagnostic) => boolean = (d) => KEY_CODES.has(d.code)): Diagnostic[] {
  const wanted = diagnostics.filter((d) => d.line === null || d.column === null);
  if (wanted.length === 0) return diagnostics;
  const root = trieOf(wanted.map((d) => d.path ?? []));
  try {
    walk(text, root);
  } catch {
    // the loader already read this text once; if this parser disagrees, fall back to the start.
  }
  const chosen = new Map<Diagnostic, number>();
  for (const d of wanted) {
    let t: Trie | undefined = root;
    let off = root.valueOffset;
    const path = d.path ?? [];
    for (let i = 0; i < path.length && t; i++) {
      t = t.children?.get(String(path[i]));
      if (!t) break;
      const last = i === path.length - 1;
      const here = last && atKey(d) && t.keyOffset >= 0 ? t.keyOffset : t.valueOffset >= 0 ? t.valueOffset : t.keyOffset;
      if (here >= 0) off = here;
    }
    chosen.set(d, off);
  }
  const positions = lineColumns(text, [...chosen.values()]);
  return diagnostics.map((d) => {
    if (!chosen.has(d)) return d;
    const off = chosen.get(d)!;
    const pos = off >= 0 ? positions.get(off) : undefined;
    return { ...d, line: pos ? pos[0] : 1, column: pos ? pos[1] : 1 };
  });
}
