// Method: maps a diagnostic's document path to the source offset of that value by walking the event stream of js-yaml 5's parser.
// Convention: line and column are 1-based, columns count UTF-16 code units; a path that is not in the text falls back to its nearest parent.
// The loader reads with js-yaml 4 (faster, less memory: docs/performance.md); positions are only
// needed when there is a finding to place, and js-yaml 5's event parser (the package `js-yaml-5`,
// an npm alias of js-yaml 5.5.0) finds them in about the time of a load, where the `yaml`
// package's concrete syntax tree took ten times as long on a 100,000-edge design.
import { parseEvents, getScalarValue, type Event, type ScalarEvent } from 'js-yaml-5';
import type { Diagnostic } from '../types';
import { KEY_CODES } from './diagnostics';
import { scanOffsets } from './lineScan';

// Event type ids of js-yaml's parser (EVENT_ID in its typings).
const DOCUMENT = 1;
const SEQUENCE = 2;
const MAPPING = 3;
const SCALAR = 4;
const ALIAS = 5;
const POP = 6;
// Quoted scalar styles: their value starts after the quote; point at the quote.
const SINGLE_QUOTED = 2;
const DOUBLE_QUOTED = 3;
const PLAIN = 1;

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

/** Records where a value starts and, for a plain scalar, its text as written. */
function setValue(text: string, trie: Trie, ev: Event): void {
  trie.valueOffset = nodeOffset(ev);
  if (ev.type === SCALAR) {
    const s = ev as ScalarEvent;
    if (s.style === PLAIN && s.valueStart >= 0 && s.valueEnd >= s.valueStart) trie.plain = text.slice(s.valueStart, s.valueEnd);
  }
}

interface Frame {
  isMap: boolean;
  trie: Trie | null;
  index: number;
  expectKey: boolean;
  pending: Trie | null;
  pendingKey: number;
}

function nodeOffset(ev: Event): number {
  switch (ev.type) {
    case SCALAR: {
      const s = ev as ScalarEvent;
      if (s.valueStart < 0) return s.anchorStart >= 0 ? s.anchorStart - 1 : s.tagStart;
      return s.style === SINGLE_QUOTED || s.style === DOUBLE_QUOTED ? s.valueStart - 1 : s.valueStart;
    }
    case SEQUENCE:
    case MAPPING:
      return ev.start;
    case ALIAS:
      return ev.anchorStart - 1; // the `*`
    default:
      return -1;
  }
}

/** Fills the wanted tries with key and value offsets in one pass over the events of the first document. */
function walk(text: string, root: Trie): void {
  const events = parseEvents(text, {});
  const frames: Frame[] = [];
  let docs = 0;
  for (let k = 0; k < events.length; k++) {
    const ev = events[k];
    const t = ev.type;
    if (t === DOCUMENT) {
      if (++docs > 1) break;
      continue;
    }
    if (t === POP) {
      frames.pop();
      continue;
    }
    let trie: Trie | null = null;
    const top = frames.length ? frames[frames.length - 1] : null;
    if (top === null) {
      trie = root;
      setValue(text, root, ev);
    } else if (!top.isMap) {
      const idx = top.index++;
      if (top.trie?.children) {
        trie = top.trie.children.get(String(idx)) ?? null;
        if (trie) setValue(text, trie, ev);
      }
    } else if (top.expectKey) {
      top.expectKey = false;
      top.pending = null;
      if (t === SCALAR && top.trie?.children) {
        const key = getScalarValue(text, ev as ScalarEvent);
        top.pending = top.trie.children.get(key) ?? null;
        top.pendingKey = nodeOffset(ev);
      }
      if (t === SEQUENCE || t === MAPPING) frames.push({ isMap: t === MAPPING, trie: null, index: 0, expectKey: true, pending: null, pendingKey: -1 });
      continue;
    } else {
      top.expectKey = true;
      trie = top.pending;
      top.pending = null;
      if (trie) {
        trie.keyOffset = top.pendingKey;
        setValue(text, trie, ev);
      }
    }
    if (t === SEQUENCE || t === MAPPING) {
      frames.push({ isMap: t === MAPPING, trie: trie?.children ? trie : null, index: 0, expectKey: true, pending: null, pendingKey: -1 });
    }
  }
}

/** Line and column (1-based) of the first alias (`*name`) of the text's first document; null when there is none. */
export function firstAliasPosition(text: string): [number, number] | null {
  let events: Event[];
  try {
    events = parseEvents(text, {});
  } catch {
    return null; // the loader reports the syntax error itself
  }
  let docs = 0;
  for (const ev of events) {
    if (ev.type === DOCUMENT && ++docs > 1) break;
    if (ev.type === ALIAS) {
      const off = nodeOffset(ev);
      return lineColumns(text, [off]).get(off)!;
    }
  }
  return null;
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

/**
 * locate() for a text that loaded: the line scan of lineScan.ts places findings on the items of
 * top-level sequences (the negative edges of a check) without parsing the text again; anything
 * it declines goes through the event parser, so the positions are the same either way.
 */
export function locateLoaded(text: string, diagnostics: Diagnostic[], atKey: (d: Diagnostic) => boolean = (d) => KEY_CODES.has(d.code)): Diagnostic[] {
  const wanted = diagnostics.filter((d) => d.line === null || d.column === null);
  if (wanted.length === 0) return diagnostics;
  const offsets = scanOffsets(
    text,
    wanted.map((d) => ({ path: d.path ?? [], atKey: atKey(d) })),
  );
  if (!offsets) return locate(text, diagnostics, atKey);
  const chosen = new Map<Diagnostic, number>();
  wanted.forEach((d, i) => chosen.set(d, offsets[i]));
  const positions = lineColumns(text, offsets);
  return diagnostics.map((d) => {
    if (!chosen.has(d)) return d;
    const pos = positions.get(chosen.get(d)!)!;
    return { ...d, line: pos[0], column: pos[1] };
  });
}
