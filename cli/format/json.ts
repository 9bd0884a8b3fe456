// The machine-readable report (format pleat-report/1), as documented in docs/cli.md.
// Large reports are written as a stream of pieces: JSON.stringify of the whole report would build
// one string as long as the report (tens of MB at 100,000 edges, and past V8's string limit,
// `Invalid string length`, for the largest designs), held in memory beside the report itself.
import { closeSync, openSync, writeSync } from 'node:fs';
import type { Report } from '../../shared/types';
import type { FormatContext } from './common';
import { escapeJsonText } from './escape';

/** Reports up to this size are indented for people who open them; larger ones stay compact. */
const INDENT_BELOW_CHARS = 1_000_000;
/** Pieces are gathered up to this many characters before they are handed to the sink. */
const CHUNK_CHARS = 1 << 20;
/** Arrays and objects with more members than this are walked member by member; smaller ones go to JSON.stringify whole. */
const WALK_ABOVE = 256;
/** Members of a long list stringified in one call. */
const SLICE = 512;
/** Levels from the top that are always walked (report, designs, one design, its analysis). */
const WALK_DEPTH = 4;

function isWalked(value: unknown, depth: number): value is object {
  if (value === null || typeof value !== 'object') return false;
  if (typeof (value as { toJSON?: unknown }).toJSON === 'function') return false;
  if (depth < WALK_DEPTH) return true;
  if (Array.isArray(value)) return value.length > WALK_ABOVE;
  let n = 0;
  for (const _ in value) if (++n > WALK_ABOVE) return true;
  return false;
}

/**
 * Writes JSON.stringify(value) to `emit` in pieces, with JSON.stringify's own rules for the
 * members (undefined, functions and symbols left out of objects, null in arrays), so the text
 * is the same as the one-string form.
 */
function stream(value: unknown, emit: (piece: string) => void, depth: number): void {
  if (!isWalked(value, depth)) {
    emit(JSON.stringify(value) ?? 'null');
    return;
  }
  if (Array.isArray(value)) {
    if (depth >= WALK_DEPTH) {
      // A long list deep in the report (edges, lifetimes): JSON.stringify of slices, one call per SLICE members.
      emit('[');
      for (let i = 0; i < value.length; i += SLICE) {
        const part = JSON.stringify(value.slice(i, i + SLICE));
        emit(i === 0 ? part.slice(1, -1) : `,${part.slice(1, -1)}`);
      }
      emit(']');
      return;
    }
    // Near the top (the list of designs, a design's edges): members that need walking are
    // walked, and each run of members that do not goes to one JSON.stringify call of up to
    // SLICE members, not one call each.
    emit('[');
    for (let i = 0; i < value.length; ) {
      if (i > 0) emit(',');
      const v = value[i];
      if (isWalked(v, depth + 1)) {
        stream(v, emit, depth + 1);
        i++;
        continue;
      }
      let end = i + 1;
      while (end < value.length && end - i < SLICE && !isWalked(value[end], depth + 1)) end++;
      const part = JSON.stringify(i === 0 && end === value.length ? value : value.slice(i, end));
      emit(part.slice(1, -1));
      i = end;
    }
    emit(']');
    return;
  }
  const obj = value as Record<string, unknown>;
  if (depth >= WALK_DEPTH) {
    streamMap(obj, emit, depth);
    return;
  }
  emit('{');
  let first = true;
  for (const k in obj) {
    if (!Object.prototype.hasOwnProperty.call(obj, k)) continue;
    const v = obj[k];
    if (v === undefined || typeof v === 'function' || typeof v === 'symbol') continue;
    emit(first ? `${JSON.stringify(k)}:` : `,${JSON.stringify(k)}:`);
    first = false;
    stream(v, emit, depth + 1);
  }
  emit('}');
}

/**
 * A large map deep in the report (a retiming's value per node): its members copied in runs of
 * SLICE into objects without a prototype (so a key such as `__proto__` stays a plain member),
 * one JSON.stringify call per run. Own keys in for...in order, as JSON.stringify takes them; a
 * member that needs walking itself is walked.
 */
function streamMap(obj: Record<string, unknown>, emit: (piece: string) => void, depth: number): void {
  emit('{');
  let first = true;
  let run: Record<string, unknown> | null = null;
  let size = 0;
  const flush = () => {
    const part = JSON.stringify(run);
    run = null;
    size = 0;
    // A run whose members JSON.stringify all leaves out (undefined, functions) writes nothing.
    if (part.length > 2) {
      emit(first ? part.slice(1, -1) : `,${part.slice(1, -1)}`);
      first = false;
    }
  };
  for (const k in obj) {
    if (!Object.prototype.hasOwnProperty.call(obj, k)) continue;
    const v = obj[k];
    if (isWalked(v, depth + 1)) {
      if (run) flush();
      emit(first ? `${JSON.stringify(k)}:` : `,${JSON.stringify(k)}:`);
      first = false;
      stream(v, emit, depth + 1);
      continue;
    }
    (run ??= Object.create(null) as Record<string, unknown>)[k] = v;
    if (++size === SLICE) flush();
  }
  if (run) flush();
  emit('}');
}

/**
 * Writes the report to `sink` in chunks of about a megabyte. A report that stays under
 * INDENT_BELOW_CHARS is written indented, in one piece, as people open small reports.
 */
export function writeJson(report: Report | object, sink: (chunk: string) => void): void {
  let parts: string[] = [];
  let size = 0;
  let streaming = false;
  const emit = (piece: string) => {
    parts.push(piece);
    size += piece.length;
    if (size >= (streaming ? CHUNK_CHARS : INDENT_BELOW_CHARS)) {
      streaming = true;
      // Same data; only characters JSON.stringify leaves raw (U+2028, bidi controls...) become \u escapes.
      sink(escapeJsonText(parts.join('')));
      parts = [];
      size = 0;
    }
  };
  stream(report, emit, 0);
  if (!streaming) {
    sink(`${escapeJsonText(JSON.stringify(report, null, 2))}\n`);
    return;
  }
  parts.push('\n');
  sink(escapeJsonText(parts.join('')));
}

/** The report as one string (small reports, tests, the copy kept beside an upload). */
export function formatJson(report: Report, _ctx: FormatContext = {}): string {
  const chunks: string[] = [];
  writeJson(report, (c) => chunks.push(c));
  return chunks.join('');
}

/** Writes the report (or another large JSON value, as pleat rtl's manifest) to a file, chunk by chunk. Throws what the file system throws. */
export function writeJsonFile(report: Report | object, file: string): void {
  const fd = openSync(file, 'w');
  try {
    writeJson(report, (c) => {
      writeSync(fd, c);
    });
  } finally {
    closeSync(fd);
  }
}
