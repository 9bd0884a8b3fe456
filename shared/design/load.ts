// Method: YAML 1.2 reading with js-yaml (core schema, no positions), or JSON.parse for a design written as JSON, under size, alias and count limits, then shared/design/validate.ts.
// Convention: never throws; every problem is a Diagnostic with a 1-based line and column, sorted by line.
import { CORE_SCHEMA, load, type LoadOptions as YamlLoadOptions } from 'js-yaml';
import type { Design, Diagnostic, LoadResult } from '../types';
import { diag, diagAt, sortDiagnostics } from './diagnostics';
import { validateDesign, type ValidateOptions } from './validate';
import { locate, plainScalarTexts } from './positions';
import { formatBytes } from './encoding';
import { decimalToRational, isDecimalText } from '../fraction';
import { offsetOf, openConstructBefore } from './unclosed';
import { jsonErrorOffset, looksLikeJson } from './json';

export interface Limits {
  /** Largest file, in bytes of UTF-8. */
  maxBytes: number;
  /** Most values that YAML aliases may add to the document once expanded. */
  maxAliasExpansion: number;
  maxNodes: number;
  maxEdges: number;
}

export const DEFAULT_LIMITS: Limits = {
  // Room for a design at the node and edge limits below: a million edges take about 85 MB as
  // generated YAML and 120 MB as JSON (docs/format.md, "Reading").
  maxBytes: 128 * 1024 * 1024,
  maxAliasExpansion: 1_000_000,
  maxNodes: 1_000_000,
  maxEdges: 1_000_000,
};

/** js-yaml's own nesting bound (its default); deeper documents get `nesting-limit`. */
const MAX_DEPTH = 100;

/** UTF-8 length of a string; once past `limit` it stops early and returns a lower bound. */
function utf8Length(text: string, limit: number): number {
  if (text.length > limit) return text.length; // every UTF-16 unit is at least one byte
  if (text.length * 3 <= limit) return text.length; // every UTF-16 unit is at most three bytes
  let bytes = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c < 0x80) bytes += 1;
    else if (c < 0x800) bytes += 2;
    else if (c >= 0xd800 && c <= 0xdbff && i + 1 < text.length) {
      const d = text.charCodeAt(i + 1);
      if (d >= 0xdc00 && d <= 0xdfff) {
        bytes += 4;
        i++;
      } else bytes += 3;
    } else bytes += 3;
    if (bytes > limit) return bytes;
  }
  return bytes;
}

interface YamlError {
  reason?: unknown;
  message?: unknown;
  mark?: { line?: unknown; column?: unknown } | null;
}

/** Where the second document of a stream starts: the first `---` or `...` line after some content. */
function secondDocument(text: string): [number, number] {
  const lines = text.split('\n');
  let content = false;
  for (let i = 0; i < lines.length; i++) {
    const l = lines[i].replace(/\r$/, '');
    if (/^(---|\.\.\.)(\s|$)/.test(l)) {
      if (content) return [i + 1, 1];
      if (l.startsWith('---') && /\S/.test(l.slice(3).replace(/#.*/, ''))) content = true;
      continue;
    }
    if (/^\s*(#.*)?$/.test(l) || l.startsWith('%')) continue;
    content = true;
  }
  return [1, 1];
}

/** Whether any line holds more than a comment, a directive or a document marker. */
function hasYamlContent(text: string): boolean {
  return text.split('\n').some((l) => !/^\s*(#.*)?$/.test(l) && !/^(%|---\s*(#.*)?$|\.\.\.\s*(#.*)?$)/.test(l.replace(/\r$/, '')));
}

function yamlDiagnostic(err: unknown, text: string): Diagnostic {
  const e = (err ?? {}) as YamlError;
  const reason = typeof e.reason === 'string' && e.reason ? e.reason : String(e.message ?? err);
  const mark = e.mark;
  let line = 1;
  let column = 1;
  if (mark && typeof mark.line === 'number' && typeof mark.column === 'number') {
    // js-yaml marks are 0-based
    line = mark.line + 1;
    column = mark.column + 1;
  }
  if (/maxDepth/.test(reason)) {
    return diagAt('nesting-limit', `collections are nested more than ${MAX_DEPTH} levels deep; a design needs five at most`, line, column);
  }
  if (/input is empty/.test(reason)) {
    return diagAt('empty-file', 'the file holds no YAML document; a design starts with `format: pleat/1`', 1, 1);
  }
  if (/single document/.test(reason)) {
    const [l, c] = secondDocument(text);
    return diagAt('yaml-syntax', 'YAML syntax: the file holds more than one document; a design file holds exactly one', l, c);
  }
  // The parser stops where it noticed the problem; a bracket or quote left open is often lines
  // earlier, so the message names where it was opened as well.
  const open = openConstructBefore(text, offsetOf(text, line, column));
  const left = open ? `; the \`${open.char}\` opened at ${open.line}:${open.column} is never closed` : '';
  return diagAt('yaml-syntax', `YAML syntax: ${reason}${left}`, line, column);
}

/**
 * Counts the values that aliases add when the shared references js-yaml returns are expanded,
 * memoising the size of every collection by identity so a bomb costs no more than its text.
 * Returns the path of the largest single expansion past the bound, or of a structure that contains itself.
 */
function aliasProblem(doc: unknown, bound: number): { path: (string | number)[]; selfReference: boolean } | null {
  if (typeof doc !== 'object' || doc === null) return null;
  const size = new Map<object, number>(); // finished collections: expanded size
  const open = new Set<object>(); // collections on the current descent
  let distinct = 0; // values counted once per collection, as written in the text
  let largest = 0;
  let largestPath: (string | number)[] = [];

  interface Frame {
    obj: object;
    keys: (string | number)[];
    i: number;
    total: number;
  }
  const stack: Frame[] = [];
  const pathOf = (extra: string | number): (string | number)[] => {
    const p: (string | number)[] = [];
    for (let k = 1; k < stack.length; k++) p.push(stack[k - 1].keys[stack[k - 1].i - 1]);
    p.push(extra);
    return p;
  };
  const enter = (obj: object) => {
    open.add(obj);
    const keys: (string | number)[] = Array.isArray(obj) ? obj.map((_, i) => i) : Object.keys(obj);
    distinct += 1;
    stack.push({ obj, keys, i: 0, total: 1 });
  };
  enter(doc);
  while (stack.length) {
    const f = stack[stack.length - 1];
    if (f.i < f.keys.length) {
      const key = f.keys[f.i++];
      const child = (f.obj as Record<string | number, unknown>)[key];
      if (typeof child !== 'object' || child === null) {
        f.total += 1;
        distinct += 1;
        continue;
      }
      if (open.has(child)) return { path: pathOf(key), selfReference: true };
      const known = size.get(child);
      if (known !== undefined) {
        // a second sight of the same collection: an alias expands it again
        f.total += known;
        if (known > largest) {
          largest = known;
          largestPath = pathOf(key);
        }
        continue;
      }
      enter(child);
    } else {
      stack.pop();
      open.delete(f.obj);
      size.set(f.obj, f.total);
      if (stack.length) stack[stack.length - 1].total += f.total;
      else if (f.total - distinct > bound) return { path: largestPath, selfReference: false };
    }
  }
  return null;
}

// Sixteen digits in a row (a dot may sit between them): more than a double always keeps exactly.
const LONG_NUMBER = /(?:\d\.?){16}/;

/**
 * A coefficient written with more significant digits than a double keeps (17 or more, e.g. one
 * just below a rounding tie) would be quantised from the nearest double, not from the decimal
 * in the file (docs/rtl.md). Keep its source text where it differs; only files that hold such a
 * long number pay for the extra pass over the text.
 */
function keepCoefficientTexts(text: string, design: Design): void {
  if (!LONG_NUMBER.test(text)) return;
  const at: number[] = [];
  design.nodes.forEach((n, i) => {
    if (n.coefficient !== undefined) at.push(i);
  });
  if (at.length === 0) return;
  const texts = plainScalarTexts(
    text,
    at.map((i) => ['nodes', i, 'coefficient']),
  );
  at.forEach((i, k) => {
    const src = texts[k]?.replace(/_/g, '');
    const node = design.nodes[i];
    if (!src || !isDecimalText(src) || node.coefficient === undefined) return;
    const exact = decimalToRational(src);
    const nearest = decimalToRational(node.coefficient);
    if (exact.num !== nearest.num || exact.den !== nearest.den) node.coefficientText = src;
  });
}

/** Line and column (1-based) of an offset. */
function lineColumnOf(text: string, offset: number): [number, number] {
  let line = 1;
  let start = 0;
  for (let nl = text.indexOf('\n'); nl >= 0 && nl < offset; nl = text.indexOf('\n', nl + 1)) {
    line++;
    start = nl + 1;
  }
  return [line, offset - start + 1];
}

function jsonDiagnostic(err: unknown, text: string): Diagnostic {
  if (!/\S/.test(text)) return diagAt('empty-file', 'the file holds no JSON value; a design is an object that starts with `"format": "pleat/1"`', 1, 1);
  const found = jsonErrorOffset(text);
  if (!found) return diagAt('json-syntax', `JSON syntax: ${(err as Error)?.message ?? String(err)}`, 1, 1);
  const [line, column] = lineColumnOf(text, found.offset);
  const what = found.offset >= text.length ? 'the text ends' : `found \`${text[found.offset]}\``;
  return diagAt('json-syntax', `JSON syntax: expected ${found.expected}, ${what}`, line, column);
}

// js-yaml's typings lag behind its options: maxDepth bounds the nesting.
const YAML_OPTIONS = { schema: CORE_SCHEMA, maxDepth: MAX_DEPTH } as YamlLoadOptions;

/** Which reader a text takes: 'json' only JSON.parse; 'yaml' (default) JSON.parse when the text opens an object and parses as JSON, else js-yaml. */
export type DesignSyntax = 'yaml' | 'json';

function limitResult(text: string, d: Diagnostic): LoadResult {
  return { design: null, diagnostics: sortDiagnostics(locate(text, [d])) };
}

function loadUnchecked(input: string, limits: Limits, validation: ValidateOptions, syntax: DesignSyntax): LoadResult {
  const text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input;
  const bytes = utf8Length(text, limits.maxBytes);
  if (bytes > limits.maxBytes) {
    return {
      design: null,
      diagnostics: [diagAt('file-too-large', `the file is larger than ${formatBytes(limits.maxBytes)}, the limit for a design file; split the design`, 1, 1)],
    };
  }

  let doc: unknown;
  let json = false;
  if (syntax === 'json' || looksLikeJson(text)) {
    // JSON is YAML's flow style with nothing implicit: JSON.parse reads the same data several
    // times faster. A `.fold.yaml` file that opens with `{` but is not JSON goes on to YAML.
    try {
      doc = JSON.parse(text);
      json = true;
    } catch (err) {
      if (syntax === 'json') return { design: null, diagnostics: [jsonDiagnostic(err, text)] };
    }
  }
  if (!json) {
    try {
      doc = load(text, YAML_OPTIONS);
    } catch (err) {
      return { design: null, diagnostics: [yamlDiagnostic(err, text)] };
    }
    // js-yaml returns undefined or null when the text holds no document (as for `~` alone).
    if ((doc === undefined || doc === null) && !hasYamlContent(text)) return { design: null, diagnostics: [yamlDiagnostic({ reason: 'input is empty' }, text)] };
  }

  // Aliases need an anchor (`&`) and a reference (`*`): without both, nothing is shared.
  if (!json && text.includes('&') && text.includes('*')) {
    const problem = aliasProblem(doc, limits.maxAliasExpansion);
    if (problem) {
      const message = problem.selfReference
        ? 'a YAML alias refers to a collection that contains it; the document would be infinite'
        : `YAML aliases expand to more than ${limits.maxAliasExpansion.toLocaleString('en-US')} extra values; write the values out or remove the aliases`;
      return limitResult(text, diag('alias-limit', message, problem.path));
    }
  }

  if (typeof doc === 'object' && doc !== null && !Array.isArray(doc)) {
    const d = doc as Record<string, unknown>;
    const over: Diagnostic[] = [];
    if (Array.isArray(d.nodes) && d.nodes.length > limits.maxNodes) {
      over.push(diag('too-many-nodes', `the design has ${d.nodes.length} nodes; the limit is ${limits.maxNodes}`, ['nodes']));
    }
    if (Array.isArray(d.edges) && d.edges.length > limits.maxEdges) {
      over.push(diag('too-many-edges', `the design has ${d.edges.length} edges; the limit is ${limits.maxEdges}`, ['edges']));
    }
    if (over.length) return { design: null, diagnostics: sortDiagnostics(locate(text, over)) };
  }

  // The document is this call's own (parsed here, never returned): without aliases, which could
  // make one object two edges, the Design may take its objects instead of copying them.
  const aliases = !json && text.includes('&') && text.includes('*');
  const { design, diagnostics } = validateDesign(doc, aliases ? validation : { ...validation, adoptDocument: true });
  if (design) keepCoefficientTexts(text, design);
  if (diagnostics.length === 0) return { design, diagnostics };
  return { design, diagnostics: sortDiagnostics(locate(text, diagnostics)) };
}

export interface LoadOptions extends ValidateOptions {
  limits?: Partial<Limits>;
  /** 'json' for a `*.fold.json` file: JSON only, JSON syntax errors. Default 'yaml' (which reads JSON text too). */
  syntax?: DesignSyntax;
}

/** The reader a design file's name asks for: `*.json` files are JSON, every other file YAML (which reads JSON too). */
export function syntaxOfFile(file: string): DesignSyntax {
  return /\.json$/i.test(file) ? 'json' : 'yaml';
}

/**
 * Reads a design file's text into a validated, normalised Design. Never throws and never hangs:
 * every problem, including a failure of the checker itself, comes back as a diagnostic.
 * `{ unplaced: 'allow' }` loads a design whose folding sets are partial or missing, for a planner
 * (shared/design/validate.ts, ValidateOptions); `factor` replaces `folding.factor`.
 */
export function loadDesign(text: string, options?: LoadOptions): LoadResult {
  try {
    const limits: Limits = { ...DEFAULT_LIMITS };
    const given = options?.limits ?? {};
    for (const k of Object.keys(DEFAULT_LIMITS) as (keyof Limits)[]) {
      const v = given[k];
      if (typeof v === 'number' && v >= 0) limits[k] = v;
    }
    if (typeof text !== 'string') {
      return { design: null, diagnostics: [diagAt('internal-error', 'the design was not given as text', 1, 1)] };
    }
    const validation: ValidateOptions = {};
    if (options?.unplaced !== undefined) validation.unplaced = options.unplaced;
    if (options?.factor !== undefined) validation.factor = options.factor;
    return loadUnchecked(text, limits, validation, options?.syntax ?? 'yaml');
  } catch (err) {
    const what = err instanceof Error ? err.message : String(err);
    return {
      design: null,
      diagnostics: [diagAt('internal-error', `the checker failed while reading this file (${what}); please report it`, 1, 1)],
    };
  }
}

/**
 * The name of a design that did not load, read from its top-level `name:` line if there is one,
 * so reports can still say which design failed. The CLI and the server both report it this way.
 */
export function nameOfInvalidDesign(text: string): string | null {
  const m = /^name:[ \t]*(["']?)([A-Za-z0-9._-]+)\1[ \t]*(#.*)?$/m.exec(text);
  if (m) return m[2]!;
  // A design written as JSON, one field per line: `  "name": "x",`
  const j = looksLikeJson(text) ? /^[ \t]*"name"[ \t]*:[ \t]*"([A-Za-z0-9._-]+)"[ \t]*,?[ \t]*$/m.exec(text) : null;
  return j ? j[1]! : null;
}
