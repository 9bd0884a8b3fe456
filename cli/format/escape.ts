// Characters of ids and file names that must not reach a terminal or a CI log raw: C0 and C1
// controls (ESC starts terminal sequences, NUL cuts logs), DEL, the Unicode line and paragraph
// separators, bidirectional overrides and zero-width characters (they hide or reorder text).
// Each is shown as a visible escape (`\x1b`, `\u2028`); everything else is left as it is, and
// escaping twice changes nothing. Common practice, no source (see docs/cli.md).
const UNSAFE = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u200b-\u200f\u2028-\u202e\u2060-\u2064\u2066-\u2069\ufeff]/g;
// Inside one value a line break is unsafe too (it would start a fake line of output).
const UNSAFE_IN_VALUE = /[\n\t]/g;

function show(ch: string): string {
  const c = ch.charCodeAt(0);
  return c <= 0xff ? `\\x${c.toString(16).padStart(2, '0')}` : `\\u${c.toString(16).padStart(4, '0')}`;
}

/** Text of several lines (a CLI message): controls escaped, its own line breaks kept. */
export function escapeTerminal(s: string): string {
  return s.replace(UNSAFE, show);
}

/** A JSON text with the unsafe characters that JSON.stringify leaves raw written as \u escapes: the same data. */
export function escapeJsonText(json: string): string {
  // JSON.stringify writes every C0 control as an escape, so in its ASCII output (most reports)
  // DEL is the only unsafe character left: two native scans instead of the expression's walk.
  if (Buffer.byteLength(json, 'utf8') === json.length && !json.includes('\u007f')) return json;
  return json.replace(UNSAFE, (ch) => `\\u${ch.charCodeAt(0).toString(16).padStart(4, '0')}`);
}

/** One user-given value (id, name, path, message) made safe to print on one line. */
export function escapeControls(s: string): string {
  return s.replace(UNSAFE, show).replace(UNSAFE_IN_VALUE, show);
}

/** The same test as UNSAFE plus line breaks and tabs, by code unit: a large report has a million strings. */
function needs(s: string): boolean {
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c < 0x20) return true; // every C0 control, \n and \t included
    if (c < 0x7f) continue;
    if (c <= 0x9f) return true; // DEL and C1
    if (c < 0x200b) continue;
    if (c <= 0x200f || (c >= 0x2028 && c <= 0x202e) || (c >= 0x2060 && c <= 0x2064) || (c >= 0x2066 && c <= 0x2069) || c === 0xfeff) return true;
  }
  return false;
}

/**
 * The same value with every string (keys included) escaped; parts that need nothing are
 * returned as they are, so a clean report is walked once and not copied.
 */
export function escapeControlsDeep<T>(value: T): T {
  if (typeof value === 'string') return (needs(value) ? escapeControls(value) : value) as T;
  if (value === null || typeof value !== 'object') return value;
  if (Array.isArray(value)) {
    let copy: unknown[] | null = null;
    for (let i = 0; i < value.length; i++) {
      const item: unknown = value[i];
      // numbers, booleans and null need nothing: skip the call
      if (item === null || (typeof item !== 'object' && typeof item !== 'string')) continue;
      const v = escapeControlsDeep(item);
      if (v !== item) {
        copy ??= value.slice();
        copy[i] = v;
      }
    }
    return (copy ?? value) as T;
  }
  let copy: Record<string, unknown> | null = null;
  const obj = value as Record<string, unknown>;
  // for...in rather than Object.entries: no array of pairs per object
  let renamed = false;
  for (const k in obj) {
    if (!Object.prototype.hasOwnProperty.call(obj, k)) continue;
    const v = obj[k];
    if (needs(k)) renamed = true;
    const nv = v === null || (typeof v !== 'object' && typeof v !== 'string') ? v : escapeControlsDeep(v);
    if (nv !== v) {
      copy ??= { ...obj };
      copy[k] = nv;
    }
  }
  if (!renamed) return (copy ?? value) as T;
  // An escaped key keeps its place (a list of moved nodes stays in the engine's order).
  const from = copy ?? obj;
  const out: Record<string, unknown> = {};
  for (const k in from) if (Object.prototype.hasOwnProperty.call(from, k)) out[needs(k) ? escapeControls(k) : k] = from[k];
  return out as T;
}
