// Method: the validation rules of the design format pleat/1 (docs/diagnostics.md), as a table of stable codes.
// Convention: codes are kebab-case and never reused for another rule; line and column are 1-based.
import type { Diagnostic } from '../types';

export type Severity = Diagnostic['severity'];

/**
 * `a` or `an` before a word as it is spoken: "an `add` unit", "a `mul` unit". `spoken` is the
 * bare word when `text` carries quotes or backticks. Vowel letters decide, which is right for
 * the operation kinds and ids of designs (English usage, common practice).
 */
export function withArticle(text: string, spoken = text): string {
  return `${/^[aeiou]/i.test(spoken.replace(/^[^A-Za-z0-9]+/, '')) ? 'an' : 'a'} ${text}`;
}

export interface CodeInfo {
  severity: Severity;
  /** The rule in one line; docs/diagnostics.md has the long form and an example fix. */
  rule: string;
}

const E = 'error' as const;
const W = 'warning' as const;

/** Every code the loader and the validator can produce. */
export const CODES = {
  // protection of the tool, checked before or right after parsing
  'file-too-large': { severity: E, rule: 'The file is larger than the size limit (16 MiB of UTF-8 by default).' },
  'unfed-output': { severity: W, rule: 'An output has no edge into it: it would never show a value.' },
  'file-encoding': { severity: E, rule: 'The file is not UTF-8: invalid bytes, or UTF-16 or UTF-32 text.' },
  'alias-limit': { severity: E, rule: 'YAML aliases expand to more values than the limit, or a structure refers to itself.' },
  'nesting-limit': { severity: E, rule: 'Collections are nested more than 100 levels deep.' },
  'too-many-nodes': { severity: E, rule: 'The design has more nodes than the limit (1,000,000 by default).' },
  'too-many-edges': { severity: E, rule: 'The design has more edges than the limit (1,000,000 by default).' },
  // reading the YAML
  'yaml-syntax': { severity: E, rule: 'The text is not well-formed YAML (one document, no duplicate keys, no tabs for indentation).' },
  'json-syntax': { severity: E, rule: 'A design file named *.fold.json is not well-formed JSON (RFC 8259).' },
  'empty-file': { severity: E, rule: 'The file holds no YAML document (or, for *.fold.json, no JSON value).' },
  // JSON Schema (shared/design/schema.ts)
  'unsupported-format': { severity: E, rule: 'The `format` field must be `pleat/1`.' },
  'schema-type': { severity: E, rule: 'A field has the wrong type (string, number, integer, list, mapping).' },
  'schema-required': { severity: E, rule: 'A required field is missing.' },
  'schema-unknown-field': { severity: E, rule: 'A field that format pleat/1 does not define.' },
  'schema-value': { severity: E, rule: 'A field has a value outside its allowed range, pattern or list of words.' },
  // semantic rules of format 1
  'duplicate-id': { severity: E, rule: 'Ids must be unique among units and nodes together.' },
  'unknown-node': { severity: E, rule: 'An edge or a folding set names a node that does not exist.' },
  'unknown-unit': { severity: E, rule: 'A folding set is keyed by a unit that does not exist.' },
  'kind-without-unit': { severity: E, rule: 'An operation node has a kind that no unit has.' },
  'kind-mismatch': { severity: E, rule: 'A node is placed in the folding set of a unit of another kind.' },
  'plan-incomplete': { severity: E, rule: 'Some operations are in no folding set (or there is no folding plan): run `pleat plan` to place them.' },
  'node-in-two-places': { severity: E, rule: 'An operation node appears more than once across the folding sets.' },
  'boundary-in-set': { severity: E, rule: 'An input or output node is placed in a folding set.' },
  'set-too-long': { severity: E, rule: 'A folding set has more entries than the folding factor N.' },
  'slot-out-of-range': { severity: E, rule: 'A `slot` is not within 0..N-1.' },
  'slot-on-operation': { severity: E, rule: 'A `slot` is given on an operation node; only inputs and outputs take one.' },
  'edge-into-input': { severity: E, rule: 'An edge ends at an input node.' },
  'edge-out-of-output': { severity: E, rule: 'An edge starts at an output node.' },
  'number-format': { severity: E, rule: 'A fixed-point `format` is not Qm.n or UQm.n of 1 to 64 bits.' },
  'serial-port': { severity: E, rule: 'A serial port lists no node, a node that is not of its direction, a node twice or in two ports, or takes an id already used.' },
  'rounding-on-input': { severity: E, rule: '`rounding` or `overflow` is given on an input, which takes its samples as they come.' },
  'format-too-narrow': { severity: W, rule: 'The worst-case range of a signal (bit growth from the input formats and coefficients) exceeds its format.' },
  'op-arity': { severity: E, rule: 'The arithmetic of a node does not fit its number of inputs or lacks its coefficient.' },
  'zero-delay-loop': { severity: E, rule: 'A loop of edges carries no delay at all, so the graph cannot be computed.' },
  'internal-error': { severity: E, rule: 'The checker itself failed; the message says where. Please report it.' },
  // warnings: the design stays valid
  'idle-unit': { severity: W, rule: 'A unit has an empty folding set (or none).' },
  'no-path-to-output': { severity: W, rule: 'A node has no path to any output.' },
  'unused-input': { severity: W, rule: 'An input feeds nothing.' },
} as const satisfies Record<string, CodeInfo>;

export type DiagnosticCode = keyof typeof CODES;

/**
 * Codes whose offending thing is a mapping key rather than its value (an unknown field, a set
 * keyed by an unknown unit): positions.ts points at the key for these.
 */
export const KEY_CODES: ReadonlySet<string> = new Set<DiagnosticCode>(['schema-unknown-field', 'unknown-unit', 'idle-unit', 'plan-incomplete']);

/** A diagnostic without a position yet; positions.ts fills line and column from `path`. */
/** Longest message kept; names in a hostile file can be megabytes long. */
const MAX_MESSAGE = 1000;

export function diag(code: DiagnosticCode, message: string, path?: (string | number)[]): Diagnostic {
  const text = message.length > MAX_MESSAGE ? message.slice(0, MAX_MESSAGE) + '…' : message;
  const d: Diagnostic = { severity: CODES[code].severity, code, message: text, line: null, column: null };
  if (path) d.path = path;
  return d;
}

/** A diagnostic whose position is already known (1-based). */
export function diagAt(code: DiagnosticCode, message: string, line: number, column: number): Diagnostic {
  return { severity: CODES[code].severity, code, message, line, column };
}

/** Sort by line then column, keeping the order of discovery among equals; unplaced ones last. */
export function sortDiagnostics(list: Diagnostic[]): Diagnostic[] {
  return list
    .map((d, i) => ({ d, i }))
    .sort((a, b) => {
      const la = a.d.line ?? Infinity;
      const lb = b.d.line ?? Infinity;
      if (la !== lb) return la - lb;
      const ca = a.d.column ?? Infinity;
      const cb = b.d.column ?? Infinity;
      if (ca !== cb) return ca - cb;
      return a.i - b.i;
    })
    .map((x) => x.d);
}

/** `edges[3].from` from ['edges', 3, 'from']: the way people name a place in a design file. */
export function formatPath(path: readonly (string | number)[]): string {
  let s = '';
  for (const seg of path) {
    if (typeof seg === 'number') s += `[${seg}]`;
    else if (/^[A-Za-z_][A-Za-z0-9_-]*$/.test(seg)) s += s ? `.${seg}` : seg;
    else s += `[${JSON.stringify(seg.length > 40 ? seg.slice(0, 40) + '…' : seg)}]`;
  }
  return s || '(top level)';
}

/** A short, printable rendering of a value for messages. */
export function showValue(v: unknown): string {
  if (v === null || v === undefined) return 'null';
  if (typeof v === 'string') return v.length > 40 ? JSON.stringify(v.slice(0, 40) + '…') : JSON.stringify(v);
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  if (Array.isArray(v)) return `a list of ${v.length}`;
  if (typeof v === 'object') return 'a mapping';
  return typeof v;
}

/** Words for a JSON type, for messages. */
export function typeWord(v: unknown): string {
  if (v === null || v === undefined) return 'null';
  if (Array.isArray(v)) return 'a list';
  if (typeof v === 'object') return 'a mapping';
  if (typeof v === 'number') return Number.isInteger(v) ? 'an integer' : 'a number';
  if (typeof v === 'string') return 'a string';
  if (typeof v === 'boolean') return 'a boolean';
  return typeof v;
}
