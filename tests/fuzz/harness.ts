// The fuzz campaign's generator and oracle, shared by `npm run fuzz` (scripts/fuzz.ts, the long
// run), the short run in `npm test` (tests/engine/load-robustness.test.ts) and the replay of kept
// failures (tests/engine/fuzz-regressions.test.ts). Oracle: docs/reliability.md.
import { dump } from 'js-yaml';
import { seededRandom } from '../../shared/hardware/arith';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { withControl } from '../../shared/hardware/control';
import { randomDesign } from '../support/randomDesign';
import type { Design } from '../../shared/types';

/** The text of a design as a user writes it (format pleat/1 field names). */
export function designText(d: Design): string {
  const doc: Record<string, unknown> = { format: d.format, name: d.name };
  if (d.clockNs !== undefined) doc.clock_ns = d.clockNs;
  if (Object.keys(d.kinds).length) doc.kinds = d.kinds;
  doc.units = d.units;
  doc.nodes = d.nodes;
  doc.edges = d.edges;
  doc.folding = d.folding;
  return dump(doc, { flowLevel: 2, lineWidth: 200 });
}

// Values people and tools get wrong: extremes of IEEE 754 and of 32-bit counts, wrong types,
// control characters, YAML sigils (common practice, no source).
const NASTY = [
  '0', '-1', '1e308', '-1e308', '5e-324', '2147483647', '2147483648', '9007199254740993', '0.5', '1.0000000000000000001',
  '.inf', '.nan', '~', 'null', '[]', '{}', '""', "''", 'true', '"\\e[31m"', '"\\0"', '"\\u2028"', '"__proto__"', 'input', 'output',
  '&a x', '*a', '!!binary AAAA', '"' + 'n'.repeat(300) + '"', '[[[[[[[[[[]]]]]]]]]]', '0x1F', '1_000', '-0',
];
const CHARS = [':', '-', '{', '}', '[', ']', '&', '*', '!', '"', "'", '#', '|', '>', ' ', '\t', '0', 'x', '\u00e9', '\u0000', '\u001b', '\ufeff', '\r', ','];

/** One mutated text: line edits, characters, and values swapped for nasty ones. */
export function mutateText(text: string, rnd: () => number, edits: number): string {
  let lines = text.split('\n');
  const int = (n: number) => Math.floor(rnd() * Math.max(1, n));
  for (let k = 0; k < edits; k++) {
    const op = int(7);
    const i = int(lines.length);
    if (op === 0) lines.splice(i, 1);
    else if (op === 1) lines.splice(i, 0, lines[i] ?? '');
    else if (op === 2) lines[i] = ' '.repeat(int(4)) + (lines[i] ?? '');
    else if (op === 3) lines = lines.slice(0, Math.max(1, i));
    else if (op === 4 || op === 5) {
      // a scalar value replaced by a nasty one
      const line = lines[i] ?? '';
      const spots = [...line.matchAll(/(:\s*|,\s*|\[\s*)([^,\]\}\s:][^,\]\}]*)/g)];
      if (spots.length) {
        const m = spots[int(spots.length)];
        const at = (m.index ?? 0) + m[1].length;
        lines[i] = line.slice(0, at) + NASTY[int(NASTY.length)] + line.slice(at + m[2].length);
      }
    } else {
      const flat = lines.join('\n');
      const j = int(flat.length);
      lines = (flat.slice(0, j) + CHARS[int(CHARS.length)] + flat.slice(j + 1)).split('\n');
    }
  }
  return lines.join('\n');
}

/** Input number `i` of a campaign with `seed`: a generated design, mutated in most cases. */
export function fuzzInput(seed: number, i: number): string {
  const rnd = seededRandom((seed * 1_000_003 + i) >>> 0);
  const design = randomDesign((seed * 7919 + i) >>> 0, { minOps: 1, maxOps: 10 });
  const text = designText(design);
  const kind = i % 10;
  if (kind === 0) return text; // valid as generated
  return mutateText(text, rnd, 1 + Math.floor(rnd() * (kind < 6 ? 2 : 6)));
}

/**
 * Independent re-check of a design the loader accepted: the rules that make a design usable
 * at all, restated here from docs/diagnostics.md without the validator's code.
 */
export function acceptedDesignProblems(d: Design): string[] {
  const p: string[] = [];
  const ids = new Set<string>();
  for (const x of [...d.units, ...d.nodes]) {
    if (typeof x.id !== 'string' || x.id === '') p.push('an empty id');
    if (ids.has(x.id)) p.push(`id ${x.id} twice`);
    ids.add(x.id);
  }
  const nodeKind = new Map(d.nodes.map((n) => [n.id, n.kind]));
  const N = d.folding.factor;
  if (!Number.isInteger(N) || N < 1) p.push(`factor ${N}`);
  for (const e of d.edges) {
    if (!nodeKind.has(e.from) || !nodeKind.has(e.to)) p.push(`edge ${e.from} -> ${e.to} names an unknown node`);
    if (!Number.isInteger(e.delays) || e.delays < 0) p.push(`edge delays ${e.delays}`);
    if (nodeKind.get(e.to) === 'input') p.push(`edge into input ${e.to}`);
  }
  const placed = new Map<string, number>();
  for (const [unit, list] of Object.entries(d.folding.sets)) {
    const u = d.units.find((x) => x.id === unit);
    if (!u) p.push(`set of unknown unit ${unit}`);
    if (list.length > N) p.push(`set ${unit} longer than N`);
    for (const v of list) {
      if (v === null) continue;
      placed.set(v, (placed.get(v) ?? 0) + 1);
      if (u && nodeKind.get(v) !== u.kind) p.push(`node ${v} in a set of kind ${u.kind}`);
    }
  }
  for (const n of d.nodes) {
    const boundary = n.kind === 'input' || n.kind === 'output';
    if (!boundary && placed.get(n.id) !== 1) p.push(`operation ${n.id} placed ${placed.get(n.id) ?? 0} times`);
    if (n.slot !== undefined && (!boundary || n.slot < 0 || n.slot >= N)) p.push(`slot ${n.slot} of ${n.id}`);
    for (const t of [n.time, d.kinds[n.kind]?.time]) if (t !== undefined && !(Number.isFinite(t) && t > 0)) p.push(`time ${t}`);
  }
  for (const u of d.units) if (!Number.isInteger(u.stages) || u.stages < 0) p.push(`stages ${u.stages}`);
  if (d.clockNs !== undefined && !(Number.isFinite(d.clockNs) && d.clockNs > 0)) p.push(`clock ${d.clockNs}`);
  return p;
}

/** Numbers of a result that are not finite (they would print as Infinity or null). */
function nonFinite(value: unknown, path = '', out: string[] = []): string[] {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) out.push(`${path} = ${value}`);
  } else if (Array.isArray(value)) value.forEach((v, i) => out.length < 5 && nonFinite(v, `${path}[${i}]`, out));
  else if (value && typeof value === 'object') for (const [k, v] of Object.entries(value)) if (out.length < 5) nonFinite(v, `${path}.${k}`, out);
  return out;
}

export interface Verdict {
  ok: boolean;
  /** What went wrong, when not ok. */
  failure?: string;
  accepted: boolean;
}

/**
 * Runs one text through the loader and, when it loads, the analysis and the control tables.
 * Fails on: an exception, an `internal-error`, a diagnostic without a valid position, an error
 * beside an accepted design, an accepted design that breaks the re-check, a non-finite number.
 * (Long-running inputs are found by the caller, which times every input.)
 */
export function judge(text: string): Verdict {
  let r;
  try {
    r = loadDesign(text);
  } catch (e) {
    return { ok: false, accepted: false, failure: `loadDesign threw: ${(e as Error).message}` };
  }
  const lines = text.replace(/^\uFEFF/, '').split('\n').length;
  for (const d of r.diagnostics) {
    if (d.code === 'internal-error') return { ok: false, accepted: false, failure: `internal-error: ${d.message}` };
    if (!Number.isInteger(d.line) || !Number.isInteger(d.column) || d.line! < 1 || d.line! > lines + 1 || d.column! < 1) {
      return { ok: false, accepted: false, failure: `${d.code} without a valid position (${d.line}:${d.column})` };
    }
  }
  const errors = r.diagnostics.filter((d) => d.severity === 'error');
  if (!r.design) return errors.length ? { ok: true, accepted: false } : { ok: false, accepted: false, failure: 'refused without an error' };
  if (errors.length) return { ok: false, accepted: true, failure: `accepted with errors: ${errors[0].code}` };
  const problems = acceptedDesignProblems(r.design);
  if (problems.length) return { ok: false, accepted: true, failure: `invalid design accepted: ${problems.slice(0, 3).join('; ')}` };
  try {
    const a = withControl(r.design, analyze(r.design));
    const bad = nonFinite(a);
    if (bad.length) return { ok: false, accepted: true, failure: `non-finite figures: ${bad.join(', ')}` };
  } catch (e) {
    return { ok: false, accepted: true, failure: `analysis threw: ${(e as Error).message}` };
  }
  return { ok: true, accepted: true };
}
