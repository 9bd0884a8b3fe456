// Method: finds where the items of top-level block sequences start (`edges:` entries and the like)
// by one pass over the lines of the text, without parsing it again; positions.ts falls back to the
// event parser whenever this declines. It answers only for the common hand-written layout: plain
// top-level keys at column 0, block sequences of one-line items (flow maps or block maps), one-line
// quoted scalars, comments, folded/literal block scalars as top-level values. Anything else (tabs,
// CR, a BOM, document markers, directives, anchors, aliases, tags, multi-line flow or quoted scalars,
// complex keys, odd indentation, JSON text) makes it decline, so where it answers it agrees with
// the event parser: tests/engine/line-scan.test.ts checks that on random and example texts.
// Convention: offsets are UTF-16 indices into the text, as the event parser's are.

/** A top-level key: where its key is, and where the items of its block sequence start (null if it is not one). */
export interface Section {
  keyOffset: number;
  items: number[] | null;
}

const TOP_KEY = /^[A-Za-z_][A-Za-z0-9_.-]*:(?=[ \n]|$)/;
const BLOCK_SCALAR_HEADER = /^[|>]([1-9][+-]?|[+-][1-9]?)?( +#.*)? *$/;

/** Characters that never appear where the scanner answers: tab, CR, NEL, line/paragraph separators, BOM. */
const ODD_CHAR = /[\t\r\u0085\u2028\u2029\uFEFF]/;

/**
 * Whether one line's content (from `from`, up to `end`) stands alone: quotes close and flow
 * brackets balance on the line, and no anchor, alias, tag, directive, complex key or block scalar
 * starts in it. Quotes are only accepted at the start of a token, where YAML reads them as quotes.
 */
function standsAlone(text: string, from: number, end: number): boolean {
  let depth = 0;
  let tokenStart = true;
  for (let i = from; i < end; i++) {
    const c = text.charCodeAt(i);
    if (c === 32) {
      tokenStart = true;
      continue;
    }
    if (tokenStart) {
      switch (c) {
        case 35: // '#': a comment to the end of the line
          return depth === 0;
        case 34: {
          // '"': to the closing quote, skipping escapes
          let j = i + 1;
          while (j < end && text.charCodeAt(j) !== 34) j += text.charCodeAt(j) === 92 ? 2 : 1;
          if (j >= end) return false;
          i = j;
          tokenStart = false;
          continue;
        }
        case 39: {
          // "'": to the closing quote; '' is an escaped quote
          let j = i + 1;
          for (;;) {
            while (j < end && text.charCodeAt(j) !== 39) j++;
            if (j + 1 < end && text.charCodeAt(j + 1) === 39) {
              j += 2;
              continue;
            }
            break;
          }
          if (j >= end) return false;
          i = j;
          tokenStart = false;
          continue;
        }
        case 38: // & anchor
        case 42: // * alias
        case 33: // ! tag
        case 124: // | block scalar
        case 62: // > block scalar
        case 37: // % directive
        case 64: // @ reserved
        case 96: // ` reserved
          return false;
        case 63: // '?' complex key
        case 45: {
          // '-' followed by a space: a block sequence inside the line
          const n = i + 1 < end ? text.charCodeAt(i + 1) : 32;
          if (n === 32) return false;
          break;
        }
        default:
          break;
      }
    }
    if (c === 123 || c === 91) {
      if (!tokenStart) return false;
      depth++;
      tokenStart = true;
      continue;
    }
    if (c === 125 || c === 93) {
      if (--depth < 0) return false;
      tokenStart = false;
      continue;
    }
    if (c === 44) {
      tokenStart = depth > 0;
      continue;
    }
    // A quote or '#' inside a token (`a'b`, `}#`): leave it to the parser.
    if (c === 34 || c === 39 || c === 35) return false;
    tokenStart = false;
  }
  return depth === 0;
}

/** Indexes the text's top-level keys and block-sequence items; null when the text is outside what the scanner understands. */
export function scanSections(text: string): Map<string, Section> | null {
  if (ODD_CHAR.test(text)) return null;
  const sections = new Map<string, Section>();
  let current: Section | null = null;
  /** The current section's value: 'block' (collection on the next lines), 'inline' (on the key's line), 'scalar' (a block scalar). */
  let mode: 'block' | 'inline' | 'scalar' | 'none' = 'none';
  let itemIndent = -1;
  let isMapSection = false;
  let pos = 0;
  const n = text.length;
  while (pos < n) {
    let end = text.indexOf('\n', pos);
    if (end < 0) end = n;
    let first = pos;
    while (first < end && text.charCodeAt(first) === 32) first++;
    const indent = first - pos;
    const blank = first === end;
    if (mode === 'scalar' && (blank || indent > 0)) {
      pos = end + 1;
      continue; // block scalar content: anything goes
    }
    if (blank || text.charCodeAt(first) === 35) {
      pos = end + 1;
      continue; // blank line or full-line comment
    }
    if (indent === 0 && !(mode === 'block' && itemIndent <= 0 && !isMapSection && text.charCodeAt(pos) === 45)) {
      // A top-level key.
      const m = TOP_KEY.exec(text.slice(pos, Math.min(end, pos + 200)));
      if (!m) return null;
      const key = m[0].slice(0, -1);
      if (sections.has(key)) return null;
      current = { keyOffset: pos, items: null };
      sections.set(key, current);
      let v = pos + m[0].length;
      while (v < end && text.charCodeAt(v) === 32) v++;
      itemIndent = -1;
      isMapSection = false;
      if (v === end || text.charCodeAt(v) === 35) mode = 'block';
      else if (text.charCodeAt(v) === 124 || text.charCodeAt(v) === 62) {
        if (!BLOCK_SCALAR_HEADER.test(text.slice(v, end))) return null;
        mode = 'scalar';
      } else {
        if (!standsAlone(text, v, end)) return null;
        mode = 'inline';
      }
      pos = end + 1;
      continue;
    }
    // A line inside the current top-level value.
    if (mode !== 'block' || current === null) return null;
    const c = text.charCodeAt(first);
    const dash = c === 45 && (first + 1 === end || text.charCodeAt(first + 1) === 32);
    if (indent === 0 && !dash) return null;
    if (itemIndent < 0) {
      itemIndent = indent;
      isMapSection = !dash;
      if (dash) current.items = [];
    }
    if (indent === itemIndent && !isMapSection) {
      // A sequence item: its value starts at the first character after the dash.
      if (!dash) return null;
      let v = first + 1;
      while (v < end && text.charCodeAt(v) === 32) v++;
      if (v === end || text.charCodeAt(v) === 35) return null; // value on the next lines
      if (!standsAlone(text, v, end)) return null;
      current.items!.push(v);
    } else if (indent < itemIndent) {
      return null;
    } else {
      // Content of an item or of a map section; nested `- ` entries are fine.
      let v = first;
      while (v + 1 < end && text.charCodeAt(v) === 45 && text.charCodeAt(v + 1) === 32) {
        v += 2;
        while (v < end && text.charCodeAt(v) === 32) v++;
      }
      if (v + 1 === end && text.charCodeAt(v) === 45) v = end;
      if (!standsAlone(text, v, end)) return null;
    }
    pos = end + 1;
  }
  return sections;
}

/**
 * Offset of each path's node, for paths `[section, index]` into a top-level block sequence (the
 * item's value) and `[section]` at its key; null when any path is outside what the scan indexed.
 */
export function scanOffsets(text: string, paths: { path: (string | number)[]; atKey: boolean }[]): number[] | null {
  if (paths.length === 0) return [];
  for (const p of paths) if (p.path.length < 1 || p.path.length > 2 || (p.path.length === 1 && !p.atKey)) return null;
  const sections = scanSections(text);
  return sections ? offsetsIn(sections, paths) : null;
}

/** scanOffsets on sections already scanned. */
export function offsetsIn(sections: Map<string, Section>, paths: { path: (string | number)[]; atKey: boolean }[]): number[] | null {
  for (const p of paths) if (p.path.length < 1 || p.path.length > 2 || (p.path.length === 1 && !p.atKey)) return null;
  const out: number[] = [];
  for (const { path } of paths) {
    const s = sections.get(String(path[0]));
    if (!s) return null;
    if (path.length === 1) {
      out.push(s.keyOffset);
      continue;
    }
    // The engine's paths hold numbers: no string and no expression per edge placed.
    const seg = path[1];
    const index = typeof seg === 'number' ? (Number.isInteger(seg) && seg >= 0 ? seg : -1) : /^(0|[1-9][0-9]*)$/.test(seg) ? Number(seg) : -1;
    if (!s.items || index < 0) return null;
    const off = s.items[index];
    if (off === undefined) return null;
    out.push(off);
  }
  return out;
}
