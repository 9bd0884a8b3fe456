// Method: JSON Schema validation (ajv, draft-07) plus the semantic rules of format pleat/1; zero-delay
// loops by Tarjan's strongly connected components (shared/graphAlgorithms.ts). Convention: diagnostics carry `path`, no position.
import { Ajv, type ErrorObject, type ValidateFunction } from 'ajv';
import type { Design, DfgNode, Diagnostic, Edge, FixedPointDefaults, NodeOp, Unit } from '../types';
import { designSchema, MAX_FACTOR } from './schema';
import { diag, formatPath, showValue, typeWord, withArticle, type DiagnosticCode } from './diagnostics';
import { stronglyConnected } from '../graphAlgorithms';
import { closest } from '../didYouMean';
import { nodeOp } from './operations';
import { FORMAT_PATTERN, parseNumberFormat } from './numberFormat';

/** At most this many diagnostics of one code are listed; the last one says how many more there are. */
export const MAX_PER_CODE = 100;

const INPUT = 1;
const OUTPUT = 2;
const OPERATION = 0;
const BAD = -1;

let compiled: ValidateFunction | null = null;

/** Compiled once, on first use: compiling costs far more than validating a small design. */
function schemaValidator(): ValidateFunction {
  if (!compiled) {
    // scripts/build.mjs precompiles the schema for exactly these options (same keys, same order).
    const ajv = new Ajv({ allErrors: true, strict: true });
    compiled = ajv.compile(designSchema);
  }
  return compiled;
}

type Path = (string | number)[];

/** Collects diagnostics, keeping at most MAX_PER_CODE of each code so a broken huge file stays readable. */
class Collector {
  readonly list: Diagnostic[] = [];
  private readonly counts = new Map<string, number>();
  private readonly lastKept = new Map<string, Diagnostic>();
  errors = 0;

  /** `message` may be a function, so that costly hints are only worked out for diagnostics that are listed. */
  add(code: DiagnosticCode, message: string | (() => string), path: Path): void {
    const n = (this.counts.get(code) ?? 0) + 1;
    this.counts.set(code, n);
    if (n <= MAX_PER_CODE) {
      const d = diag(code, typeof message === 'string' ? message : message(), path);
      if (d.severity === 'error') this.errors++;
      this.list.push(d);
      this.lastKept.set(code, d);
    }
  }

  /** Appends "and N more" to the last kept diagnostic of every capped code. */
  finish(): Diagnostic[] {
    for (const [code, n] of this.counts) {
      if (n > MAX_PER_CODE) {
        const d = this.lastKept.get(code)!;
        d.message += ` (and ${n - MAX_PER_CODE} more ${code} problems not listed)`;
      }
    }
    return this.list;
  }
}

function isObj(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function has(o: Record<string, unknown>, k: string): boolean {
  return Object.prototype.hasOwnProperty.call(o, k);
}

function isNonNegInt(v: unknown): v is number {
  return typeof v === 'number' && Number.isInteger(v) && v >= 0;
}

// ------------------------------------------------------------------ schema errors -> diagnostics

/** JSON pointer -> path, with indexes of lists as numbers (walks the document to tell lists from maps). */
function pointerToPath(doc: unknown, pointer: string): Path {
  if (pointer === '') return [];
  const out: Path = [];
  let cur: unknown = doc;
  for (const raw of pointer.slice(1).split('/')) {
    const seg = raw.replace(/~1/g, '/').replace(/~0/g, '~');
    if (Array.isArray(cur)) {
      const i = Number(seg);
      out.push(i);
      cur = cur[i];
    } else {
      out.push(seg);
      cur = isObj(cur) && has(cur, seg) ? cur[seg] : undefined;
    }
  }
  return out;
}

function valueAt(doc: unknown, path: Path): unknown {
  let cur: unknown = doc;
  for (const seg of path) {
    if (Array.isArray(cur) && typeof seg === 'number') cur = cur[seg];
    else if (isObj(cur) && has(cur, String(seg))) cur = cur[String(seg)];
    else return undefined;
  }
  return cur;
}

/** Allowed field names at a schema location, for "did you mean" hints. */
function allowedFields(schemaPath: string): string[] {
  // schemaPath looks like '#/properties/edges/items/additionalProperties'
  const parts = schemaPath.replace(/^#\//, '').split('/');
  parts.pop();
  let s: unknown = designSchema;
  for (const p of parts) s = isObj(s) ? s[p] : undefined;
  return isObj(s) && isObj(s.properties) ? Object.keys(s.properties) : [];
}

const TYPE_WORDS: Record<string, string> = {
  string: 'a string',
  number: 'a number',
  integer: 'an integer',
  object: 'a mapping',
  array: 'a list',
  null: 'null (~)',
  boolean: 'true or false',
};

function schemaDiagnostics(doc: unknown, errors: ErrorObject[], out: Collector): void {
  const seen = new Set<string>();
  for (const e of errors) {
    const base = pointerToPath(doc, e.instancePath);
    const where = formatPath(base);
    const value = valueAt(doc, base);
    const p = e.params as Record<string, unknown>;
    let key = `${e.instancePath}|${e.keyword}`;

    if (e.instancePath === '/format') {
      // One clear message for any problem with `format`, whatever schema keyword caught it.
      key = '/format';
      if (!seen.has(key)) {
        seen.add(key);
        out.add('unsupported-format', `format is ${showValue(value)}; this tool reads format \`pleat/1\` (write \`format: pleat/1\`)`, base);
      }
      continue;
    }
    switch (e.keyword) {
      case 'required': {
        const field = String(p.missingProperty);
        key += `|${field}`;
        if (seen.has(key)) continue;
        seen.add(key);
        const at = base.length ? ` in ${where}` : '';
        out.add('schema-required', `missing required field \`${field}\`${at}`, base);
        break;
      }
      case 'additionalProperties': {
        const field = String(p.additionalProperty);
        const allowed = allowedFields(e.schemaPath);
        const near = allowed.length ? closest(field, allowed) : null;
        const hint = near ? `; did you mean \`${near}\`?` : allowed.length ? `; allowed here: ${allowed.join(', ')}` : '';
        const at = base.length ? ` in ${where}` : ' at the top level';
        out.add('schema-unknown-field', `unknown field \`${field}\`${at}${hint}`, [...base, field]);
        break;
      }
      case 'type': {
        if (seen.has(key)) continue;
        seen.add(key);
        const want = String(p.type)
          .split(',')
          .map((t) => TYPE_WORDS[t] ?? t)
          .join(' or ');
        if (base.length === 0) {
          out.add('schema-type', `a design file must be a mapping of fields (format, name, units, nodes, edges, folding), not ${typeWord(value)}`, base);
        } else {
          const scalar = typeof value === 'number' || typeof value === 'boolean' || typeof value === 'string';
          const quoteHint = String(p.type).includes('string') && scalar && typeof value !== 'string' ? ` (quote it: '${String(value)}')` : '';
          const shown = scalar ? ` ${showValue(value)}` : '';
          out.add('schema-type', `${where} must be ${want}, not ${typeWord(value)}${shown}${quoteHint}`, base);
        }
        break;
      }
      default: {
        if (seen.has(key)) continue;
        seen.add(key);
        out.add('schema-value', `${where}: ${valueRule(e, p, value)}`, base);
      }
    }
  }
}

function valueRule(e: ErrorObject, p: Record<string, unknown>, value: unknown): string {
  const v = showValue(value);
  switch (e.keyword) {
    case 'minimum':
      return `${v} is below the minimum ${String(p.limit)}`;
    case 'maximum':
      return `${v} is above the maximum ${String(p.limit)}`;
    case 'exclusiveMinimum':
      return `${v} must be greater than ${String(p.limit)}`;
    case 'enum':
      return `${v} is not one of ${(p.allowedValues as unknown[]).map((x) => String(x)).join(', ')}`;
    case 'pattern':
      if (p.pattern === FORMAT_PATTERN) return `${v} is not a format in Q notation: write Qm.n (signed: m integer bits, n fraction bits and a sign bit) or UQm.n (unsigned), e.g. Q3.12`;
      return `${v} may only contain letters, digits, '.', '_' and '-'`;
    case 'minLength':
      return 'must not be empty';
    case 'maxLength':
      return `is ${typeof value === 'string' ? value.length : '?'} characters long; the limit is ${String(p.limit)}`;
    case 'not':
      if (value === '__proto__') return '`__proto__` cannot be used as an id';
      if (value === 'input' || value === 'output') return `${v} is reserved for boundary nodes; a unit executes an operation kind such as add or mul`;
      return `${v} is not allowed here`;
    default:
      return `${v} ${e.message ?? 'is not allowed'}`;
  }
}

// ------------------------------------------------------------------ semantic rules

/** Loop of at most this many node names in a zero-delay-loop message; longer loops are shortened. */
const LOOP_NAMES_SHOWN = 12;

/** How the validator treats operations that are in no folding set (see ValidateOptions). */
export type UnplacedPolicy = 'error' | 'allow';

export interface ValidateOptions {
  /**
   * 'error' (default, what `pleat check` uses): operations in no folding set, or a file without
   * `folding:`, give one `plan-incomplete` error. 'allow': such a design loads (sets partial or
   * empty, `folding.sets` always a mapping) so that a planner can start from it; the entries
   * placed are its pins. Every other rule applies in both modes.
   */
  unplaced?: UnplacedPolicy;
  /**
   * Folding factor to use instead of `folding.factor` (for slot and set-length rules and in the
   * design returned): `pleat plan --factor`. A file without `folding:` needs it to load.
   */
  factor?: number;
  /**
   * true: the caller hands the document over (loadDesign, which drops it): the Design takes the
   * document's node and edge lists and objects, with `delays: 0` filled in, instead of copies;
   * the document must not share them through YAML aliases. The schema
   * admits only the fields a DfgNode or an Edge has, so a copy would only be a second full set of
   * objects alive beside the first until the next full collection, which on a large design comes
   * after the peak (docs/performance.md, "Peak memory"). Default false: the document is left as given.
   */
  adoptDocument?: boolean;
}

/** Most operation ids named in a plan-incomplete message. */
const UNPLACED_NAMES_SHOWN = 8;

/** What the semantic checks share: the document's parts and the tables the first checks build. */
interface Scope {
  doc: Record<string, unknown>;
  out: Collector;
  units: unknown[];
  unitsOk: boolean;
  nodes: unknown[];
  edges: unknown[];
  folding: Record<string, unknown> | null;
  factor: number | null;
  sets: Record<string, unknown> | null;
  allowUnplaced: boolean;
  /** Ids of units and nodes: value >= 0 a node index, < 0 -(unit index) - 1. */
  owner: Map<string, number>;
  unitIndex: Map<string, number>;
  unitKinds: Set<string>;
  nN: number;
  /** INPUT / OUTPUT / OPERATION / BAD per node. */
  nodeClass: Int8Array;
  /** 1 for a node whose id is taken by an earlier unit or node, or is not a string: checked only as its id's first use. */
  shadowed: Uint8Array;
  /** Node ids for "did you mean" hints, gathered only when a name is unknown. */
  nodeIds: () => string[];
}

/** Edges as flat arrays: endpoints (-1 when unknown), delays (-1 when not a valid count), degrees. */
interface EdgeTable {
  nE: number;
  eFrom: Int32Array;
  eTo: Int32Array;
  eDelays: Float64Array;
  outDeg: Int32Array;
  inDeg: Int32Array;
}

/** The semantic rules of format pleat/1, one named check after another. */
function semanticChecks(doc: Record<string, unknown>, out: Collector, options: ValidateOptions): void {
  const s = documentScope(doc, out, options);
  idChecks(s);
  nodeChecks(s);
  const e = edgeChecks(s);
  foldingSetChecks(s);
  arityChecks(s, e.inDeg);
  numberFormatChecks(s);
  serialChecks(s);
  zeroDelayLoops(s.nodes, s.nN, e.nE, e.eFrom, e.eTo, e.eDelays, out);
  reachability(s.nodes, s.nodeClass, s.shadowed, s.nN, e.nE, e.eFrom, e.eTo, e.outDeg, out);
}

/** The parts of the document the checks read, and the folding factor that applies. */
function documentScope(doc: Record<string, unknown>, out: Collector, options: ValidateOptions): Scope {
  const unitsOk = Array.isArray(doc.units);
  const units: unknown[] = unitsOk ? (doc.units as unknown[]) : [];
  const nodes: unknown[] = Array.isArray(doc.nodes) ? (doc.nodes as unknown[]) : [];
  const edges: unknown[] = Array.isArray(doc.edges) ? (doc.edges as unknown[]) : [];
  const folding = isObj(doc.folding) ? doc.folding : null;
  const factor =
    options.factor !== undefined
      ? options.factor
      : folding && typeof folding.factor === 'number' && Number.isInteger(folding.factor) && folding.factor >= 1
        ? folding.factor
        : null;
  // No `sets` (or no `folding`) is an empty plan; a `sets` of the wrong type is a schema error.
  const sets = folding && isObj(folding.sets) ? folding.sets : folding && folding.sets !== undefined ? null : {};
  const allowUnplaced = options.unplaced === 'allow';

  const owner = new Map<string, number>();
  const nN = nodes.length;
  let idList: string[] | null = null;
  const nodeIds = (): string[] => {
    if (!idList) {
      idList = [];
      for (const [id, v] of owner) if (v >= 0) idList.push(id);
    }
    return idList;
  };
  return {
    doc,
    out,
    units,
    unitsOk,
    nodes,
    edges,
    folding,
    factor,
    sets,
    allowUnplaced,
    owner,
    unitIndex: new Map(),
    unitKinds: new Set(),
    nN,
    nodeClass: new Int8Array(nN),
    shadowed: new Uint8Array(nN),
    nodeIds,
  };
}

/** Unit ids: unique among units and nodes (units and nodes share one name space). */
function idChecks(s: Scope): void {
  const { units, out, owner, unitIndex, unitKinds } = s;
  for (let i = 0; i < units.length; i++) {
    const u = units[i];
    if (!isObj(u)) continue;
    if (typeof u.kind === 'string') unitKinds.add(u.kind);
    const id = u.id;
    if (typeof id !== 'string') continue;
    const prev = owner.get(id);
    if (prev !== undefined) {
      out.add('duplicate-id', `id \`${id}\` is already used by ${ownerName(prev)}; ids must be unique among units and nodes`, ['units', i, 'id']);
      continue;
    }
    owner.set(id, -i - 1);
    unitIndex.set(id, i);
  }
}

/** Nodes: duplicate ids, kinds no unit has, slots on operations or past the folding factor. */
function nodeChecks(s: Scope): void {
  const { nodes, out, owner, unitsOk, unitKinds, factor, nN, nodeClass, shadowed } = s;
  for (let i = 0; i < nN; i++) {
    const n = nodes[i];
    if (!isObj(n)) {
      nodeClass[i] = BAD;
      continue;
    }
    const kind = n.kind;
    nodeClass[i] = kind === 'input' ? INPUT : kind === 'output' ? OUTPUT : typeof kind === 'string' ? OPERATION : BAD;
    const id = n.id;
    if (typeof id === 'string') {
      const prev = owner.get(id);
      if (prev !== undefined) {
        shadowed[i] = 1;
        out.add('duplicate-id', `id \`${id}\` is already used by ${ownerName(prev)}; ids must be unique among units and nodes`, ['nodes', i, 'id']);
      } else {
        owner.set(id, i);
      }
    } else shadowed[i] = 1;
    if (nodeClass[i] === OPERATION && unitsOk && !unitKinds.has(kind as string)) {
      out.add(
        'kind-without-unit',
        () => {
          const kinds = [...unitKinds];
          const near = closest(kind as string, kinds);
          const hint = near ? `; did you mean \`${near}\`?` : kinds.length ? `; the units have: ${kinds.slice(0, 10).join(', ')}` : '; add a unit of that kind';
          return `node \`${label(id)}\` has kind \`${label(kind)}\`, which no unit has${hint}`;
        },
        ['nodes', i, 'kind'],
      );
    }
    if (has(n, 'slot') && isNonNegInt(n.slot)) {
      if (nodeClass[i] === OPERATION) {
        out.add('slot-on-operation', `node \`${label(id)}\` is an operation; its partition comes from its folding set, so \`slot\` is allowed on inputs and outputs only`, ['nodes', i, 'slot']);
      } else if (factor !== null && n.slot >= factor) {
        out.add('slot-out-of-range', `slot ${n.slot} of \`${label(id)}\` is outside 0..${factor - 1} (folding factor ${factor})`, ['nodes', i, 'slot']);
      }
    }
  }
}

/** Edges: endpoints that exist, no edge out of an output or into an input; the flat edge table. */
function edgeChecks(s: Scope): EdgeTable {
  const { edges, out, nN, nodeClass, unitIndex, nodeIds } = s;
  const nodeIndex = s.owner;
  const nE = edges.length;
  const eFrom = new Int32Array(nE).fill(-1);
  const eTo = new Int32Array(nE).fill(-1);
  const eDelays = new Float64Array(nE).fill(-1);
  const outDeg = new Int32Array(nN);
  const inDeg = new Int32Array(nN);
  for (let i = 0; i < nE; i++) {
    const e = edges[i];
    if (!isObj(e)) continue;
    const f = e.from;
    const t = e.to;
    if (typeof f === 'string') {
      const fi = nodeAt(nodeIndex, f);
      if (fi === undefined) out.add('unknown-node', () => unknownNodeMessage(f, `edges[${i}].from`, unitIndex, nodeIds), ['edges', i, 'from']);
      else {
        eFrom[i] = fi;
        if (nodeClass[fi] === OUTPUT) out.add('edge-out-of-output', `edges[${i}] leaves output \`${f}\`; an output is a sink — take the value from the node that feeds it`, ['edges', i, 'from']);
      }
    }
    if (typeof t === 'string') {
      const ti = nodeAt(nodeIndex, t);
      if (ti === undefined) out.add('unknown-node', () => unknownNodeMessage(t, `edges[${i}].to`, unitIndex, nodeIds), ['edges', i, 'to']);
      else {
        eTo[i] = ti;
        inDeg[ti]++;
        if (nodeClass[ti] === INPUT) out.add('edge-into-input', `edges[${i}] enters input \`${t}\`; an input is a source — feed an operation node instead`, ['edges', i, 'to']);
      }
    }
    const d = has(e, 'delays') ? e.delays : 0;
    if (isNonNegInt(d)) eDelays[i] = d;
    if (eFrom[i] >= 0) outDeg[eFrom[i]]++;
  }

  return { nE, eFrom, eTo, eDelays, outDeg, inDeg };
}

/** Folding sets: keyed by units, naming operations of their kind once each; idle units; the plan complete. */
function foldingSetChecks(s: Scope): void {
  if (!s.sets) return;
  planCompleteness(s, placementChecks(s, s.sets));
}

/** Where the sets place operations, for the completeness check after them. */
interface Placement {
  placedSet: Int32Array;
  unitHasSet: Uint8Array;
  emptySets: string[];
  malformedKinds: Set<string>;
}

/** Each set: keyed by a unit, not longer than N, naming operations of the unit's kind, each once. */
function placementChecks(s: Scope, sets: Record<string, unknown>): Placement {
  const { out, units, nodes, factor, unitIndex, unitKinds, nodeClass, nodeIds, nN } = s;
  const nodeIndex = s.owner;
  const placedSet = new Int32Array(nN).fill(-1);
  const placedPos = new Int32Array(nN);
  const setKeys: string[] = [];
  const unitHasSet = new Uint8Array(units.length);
  const emptySets: string[] = [];
  const malformedKinds = new Set<string>();
  for (const key of Object.keys(sets)) {
    const si = setKeys.length;
    setKeys.push(key);
    const ui = unitIndex.get(key);
    const list = sets[key];
    if (ui === undefined) {
      const isNode = nodeAt(nodeIndex, key) !== undefined;
      out.add(
        'unknown-unit',
        () =>
          isNode
            ? `folding set \`${key}\` is keyed by a node; keys of folding.sets are unit ids`
            : `folding set \`${key}\` names no unit${hintFrom(key, [...unitIndex.keys()])}`,
        ['folding', 'sets', key],
      );
    } else unitHasSet[ui] = 1;
    const unit = ui !== undefined ? (units[ui] as Record<string, unknown>) : null;
    const unitKind = unit && typeof unit.kind === 'string' ? unit.kind : null;
    // A set the schema already refuses (not a list, or entries that are not ids) is the root
    // cause: its nodes are not also `plan-incomplete`, nor the set `idle-unit`.
    const malformed = !Array.isArray(list) || list.some((v) => v !== null && typeof v !== 'string');
    if (malformed && unitKind !== null) malformedKinds.add(unitKind);
    if (!Array.isArray(list)) continue;
    if (factor !== null && list.length > factor) {
      out.add('set-too-long', `folding set \`${key}\` has ${list.length} entries but the folding factor is ${factor}; partitions run 0..${factor - 1}`, ['folding', 'sets', key, factor]);
    }
    let used = 0;
    for (let p = 0; p < list.length; p++) {
      const v = list[p];
      if (typeof v !== 'string') continue;
      used++;
      const ni = nodeAt(nodeIndex, v);
      if (ni === undefined) {
        out.add('unknown-node', () => unknownNodeMessage(v, `folding set ${key}`, unitIndex, nodeIds), ['folding', 'sets', key, p]);
        continue;
      }
      const cls = nodeClass[ni];
      if (cls === INPUT || cls === OUTPUT) {
        out.add('boundary-in-set', `\`${v}\` is ${cls === INPUT ? 'an input' : 'an output'}; boundary nodes are never folded — give it a \`slot\` instead`, ['folding', 'sets', key, p]);
        continue;
      }
      const nk = (nodes[ni] as Record<string, unknown>).kind;
      // a kind no unit has is reported once, as kind-without-unit, not again for its placement
      if (unitKind !== null && cls === OPERATION && nk !== unitKind && unitKinds.has(nk as string)) {
        out.add('kind-mismatch', `\`${v}\` is of kind \`${label(nk)}\` but unit \`${key}\` executes \`${unitKind}\``, ['folding', 'sets', key, p]);
      }
      if (placedSet[ni] >= 0) {
        out.add('node-in-two-places', `\`${v}\` is already placed in \`${setKeys[placedSet[ni]]}\` at partition ${placedPos[ni]}; each operation runs once per iteration`, ['folding', 'sets', key, p]);
      } else {
        placedSet[ni] = si;
        placedPos[ni] = p;
      }
    }
    if (ui !== undefined && used === 0 && !(unitKind !== null && malformedKinds.has(unitKind))) emptySets.push(key);
  }
  return { placedSet, unitHasSet, emptySets, malformedKinds };
}

/** Operations in no set (one plan-incomplete error), and units that idle once the plan is whole. */
function planCompleteness(s: Scope, pl: Placement): void {
  const { doc, out, units, nodes, folding, unitIndex, unitKinds, nodeClass, shadowed, unitsOk, allowUnplaced, nN } = s;
  const { placedSet, unitHasSet, emptySets, malformedKinds } = pl;
  const unplaced: string[] = [];
  for (let i = 0; i < nN; i++) {
    if (nodeClass[i] !== OPERATION || placedSet[i] >= 0) continue;
    if (shadowed[i]) continue;
    const n = nodes[i] as Record<string, unknown>;
    if (unitsOk && !unitKinds.has(n.kind as string)) continue; // kind-without-unit says it already
    if (malformedKinds.has(n.kind as string)) continue; // the malformed set of its kind says it already
    unplaced.push(label(n.id));
  }
  // While operations wait for a plan, a unit without one is expected, not worth a warning.
  if (unplaced.length === 0 && folding) {
    for (const key of emptySets) out.add('idle-unit', `unit \`${key}\` has an empty folding set; it does nothing`, ['folding', 'sets', key]);
    for (let i = 0; i < units.length; i++) {
      const u = units[i];
      if (unitHasSet[i] || !isObj(u) || typeof u.id !== 'string' || unitIndex.get(u.id) !== i) continue;
      out.add('idle-unit', `unit \`${u.id}\` has no folding set; it does nothing`, ['units', i]);
    }
  }
  if (!allowUnplaced && (unplaced.length > 0 || !folding)) {
    // One error for the whole plan, at `folding:` (or at `nodes:` when there is no folding).
    const names =
      unplaced.length <= UNPLACED_NAMES_SHOWN
        ? unplaced.map((x) => `\`${x}\``).join(', ')
        : `${unplaced.slice(0, UNPLACED_NAMES_SHOWN).map((x) => `\`${x}\``).join(', ')} and ${unplaced.length - UNPLACED_NAMES_SHOWN} more`;
    const what = !folding
      ? `the design has no folding plan (no \`folding:\`)${unplaced.length ? `; ${operations(unplaced.length)} to place: ${names}` : ''}; run \`pleat plan --factor N\` to make one`
      : `${operations(unplaced.length)} ${unplaced.length === 1 ? 'is' : 'are'} in no folding set: ${names}; run \`pleat plan\` to place them (entries already in the sets are kept)`;
    out.add('plan-incomplete', what, folding ? ['folding'] : Array.isArray(doc.nodes) ? ['nodes'] : []);
  }
}

/** Arithmetic against the number of operands, where that is decidable. */
function arityChecks(s: Scope, inDeg: Int32Array): void {
  const { nodes, out, nN, nodeClass, shadowed } = s;
  for (let i = 0; i < nN; i++) {
    if (nodeClass[i] !== OPERATION) continue;
    if (shadowed[i]) continue; // a duplicate: duplicate-id says it
    const n = nodes[i] as Record<string, unknown>;
    const op = nodeOp(n, inDeg[i]);
    if (op === null) continue;
    const at = has(n, 'op') ? 'op' : 'kind';
    const name = label(n.id);
    if (op === 'gain' && typeof n.coefficient !== 'number') {
      out.add('op-arity', `node \`${name}\` is a gain but has no \`coefficient\``, ['nodes', i, at]);
    }
    if ((op === 'gain' || op === 'neg' || op === 'pass') && inDeg[i] !== 1) {
      out.add('op-arity', `node \`${name}\` (${op}) takes exactly one input but has ${inDeg[i]}`, ['nodes', i, at]);
    } else if (op === 'sub' && inDeg[i] < 2) {
      out.add('op-arity', `node \`${name}\` (sub) needs at least two inputs but has ${inDeg[i]}`, ['nodes', i, at]);
    } else if ((op === 'add' || op === 'mul') && inDeg[i] === 0) {
      out.add('op-arity', `node \`${name}\` (${op}) has no inputs; connect at least one edge into it`, ['nodes', i, at]);
    }
  }
}

/** Fixed-point formats: Q notation within 1..64 bits; inputs take no rounding or overflow mode. */
function numberFormatChecks(s: Scope): void {
  const { doc, nodes, out, nN, nodeClass } = s;
  const check = (v: unknown, path: Path): void => {
    if (typeof v !== 'string' || !new RegExp(FORMAT_PATTERN).test(v)) return; // the schema says it
    const f = parseNumberFormat(v);
    if (typeof f === 'string') out.add('number-format', f, path);
  };
  if (isObj(doc.fixed_point)) check(doc.fixed_point.format, ['fixed_point', 'format']);
  for (let i = 0; i < nN; i++) {
    const n = nodes[i];
    if (!isObj(n)) continue;
    check(n.format, ['nodes', i, 'format']);
    if (nodeClass[i] !== INPUT) continue;
    for (const k of ['rounding', 'overflow']) {
      if (has(n, k)) out.add('rounding-on-input', `input \`${label(n.id)}\` takes its samples as they come; \`${k}\` applies to operations and outputs only`, ['nodes', i, k]);
    }
  }
}

/**
 * Serial ports: each lists inputs or outputs (not both, not none), nodes of that kind that exist,
 * each node in one port once; the port's id is free among units, nodes and other ports.
 */
function serialChecks(s: Scope): void {
  const { doc, out, nodes } = s;
  if (!Array.isArray(doc.serial)) return;
  const ports = new Set<string>();
  const taken = new Map<string, string>();
  doc.serial.forEach((p, i) => {
    if (!isObj(p)) return;
    const id = typeof p.id === 'string' ? p.id : null;
    if (id !== null) {
      const prev = s.owner.get(id);
      if (prev !== undefined) out.add('serial-port', `serial port id \`${id}\` is already used by ${ownerName(prev)}; it names a port of the top module, so it must be new`, ['serial', i, 'id']);
      else if (ports.has(id)) out.add('serial-port', `serial port id \`${id}\` is given twice`, ['serial', i, 'id']);
      ports.add(id);
    }
    const hasIn = has(p, 'inputs');
    const hasOut = has(p, 'outputs');
    if (hasIn && hasOut) {
      out.add('serial-port', `serial port \`${label(p.id)}\` lists both inputs and outputs; a port carries one direction: split it in two`, ['serial', i, 'outputs']);
      return;
    }
    if (!hasIn && !hasOut) {
      out.add('serial-port', `serial port \`${label(p.id)}\` lists no nodes; give \`inputs: [...]\` or \`outputs: [...]\``, ['serial', i]);
      return;
    }
    const field = hasIn ? 'inputs' : 'outputs';
    const want = hasIn ? INPUT : OUTPUT;
    const list = p[field];
    if (!Array.isArray(list)) return; // the schema says it
    if (list.length === 0) out.add('serial-port', `serial port \`${label(p.id)}\` has an empty \`${field}\` list`, ['serial', i, field]);
    list.forEach((name, k) => {
      if (typeof name !== 'string') return;
      const at: Path = ['serial', i, field, k];
      const ni = nodeAt(s.owner, name);
      if (ni === undefined) {
        out.add('serial-port', () => unknownNodeMessage(name, `serial[${i}].${field}`, s.unitIndex, s.nodeIds), at);
        return;
      }
      if (s.nodeClass[ni] !== want) {
        const kind = isObj(nodes[ni]) ? label((nodes[ni] as Record<string, unknown>).kind) : '?';
        out.add('serial-port', `\`${name}\` is ${withArticle(`\`${kind}\``, kind)} node; serial port \`${label(p.id)}\` lists ${field}, so every entry must be ${hasIn ? 'an input' : 'an output'}`, at);
        return;
      }
      const prev = taken.get(name);
      if (prev !== undefined) {
        out.add('serial-port', prev === label(p.id) ? `\`${name}\` is listed twice in serial port \`${prev}\`; each sample has one place in the order` : `\`${name}\` is already on serial port \`${prev}\`; a node has one port`, at);
        return;
      }
      taken.set(name, label(p.id));
    });
  });
}

/** Index of the node with this id, or undefined (unit ids live in the same map with negative values). */
function nodeAt(owner: Map<string, number>, id: string): number | undefined {
  const v = owner.get(id);
  return v !== undefined && v >= 0 ? v : undefined;
}

/** A value as it may appear inside a message, whatever its type. */
function label(v: unknown): string {
  return typeof v === 'string' ? v : showValue(v);
}

function ownerName(v: number): string {
  return v >= 0 ? `nodes[${v}]` : `units[${-v - 1}]`;
}

function hintFrom(word: string, candidates: string[]): string {
  if (candidates.length > 10_000) return '';
  const near = closest(word, candidates);
  return near ? `; did you mean \`${near}\`?` : '';
}

function unknownNodeMessage(name: string, where: string, unitIndex: Map<string, number>, nodeIds: () => string[]): string {
  if (unitIndex.has(name)) return `${where} names \`${name}\`, which is a unit, not a node`;
  return `${where} names node \`${name}\`, which does not exist${hintFrom(name, nodeIds())}`;
}

/** Zero-delay loops: strongly connected components of the graph of edges with no delay. */
function zeroDelayLoops(
  nodes: unknown[],
  nN: number,
  nE: number,
  eFrom: Int32Array,
  eTo: Int32Array,
  eDelays: Float64Array,
  out: Collector,
): void {
  // adjacency of zero-delay edges in compressed rows; edge ids kept to report file positions
  const start = new Int32Array(nN + 1);
  let m = 0;
  for (let i = 0; i < nE; i++) {
    if (eDelays[i] === 0 && eFrom[i] >= 0 && eTo[i] >= 0) {
      start[eFrom[i] + 1]++;
      m++;
    }
  }
  if (m === 0) return;
  for (let v = 0; v < nN; v++) start[v + 1] += start[v];
  const adjEdge = new Int32Array(m);
  const fill = start.slice(0, nN);
  for (let i = 0; i < nE; i++) {
    if (eDelays[i] === 0 && eFrom[i] >= 0 && eTo[i] >= 0) adjEdge[fill[eFrom[i]]++] = i;
  }

  // components of the zero-delay graph; a loop is a component of two or more nodes or a self-loop
  const { comp, count, root } = stronglyConnected(nN, start, adjEdge, eTo);
  const size = new Int32Array(count);
  for (let v = 0; v < nN; v++) size[comp[v]]++;
  const loopRoots: number[] = [];
  for (let c = 0; c < count; c++) {
    const v = root[c];
    let selfLoop = false;
    if (size[c] === 1) {
      for (let q = start[v]; q < start[v + 1]; q++) if (eTo[adjEdge[q]] === v) selfLoop = true;
    }
    if (size[c] > 1 || selfLoop) loopRoots.push(v);
  }
  if (loopRoots.length === 0) return;

  // one concrete loop per component: breadth-first search from its root back to the root
  const parentEdge = new Int32Array(nN).fill(-1);
  const queue = new Int32Array(nN);
  for (const r of loopRoots) {
    const c = comp[r];
    let head = 0;
    let tail = 0;
    queue[tail++] = r;
    let closing = -1;
    const visited: number[] = [r];
    parentEdge[r] = -2;
    while (head < tail && closing < 0) {
      const v = queue[head++];
      for (let q = start[v]; q < start[v + 1]; q++) {
        const e = adjEdge[q];
        const w = eTo[e];
        if (comp[w] !== c) continue;
        if (w === r) {
          closing = e;
          break;
        }
        if (parentEdge[w] === -1) {
          parentEdge[w] = e;
          visited.push(w);
          queue[tail++] = w;
        }
      }
    }
    if (closing < 0) continue; // cannot happen in a strongly connected component; stay safe
    const loopEdges: number[] = [closing];
    for (let v = eFrom[closing]; v !== r; v = eFrom[parentEdge[v]]) loopEdges.push(parentEdge[v]);
    loopEdges.reverse();
    for (const v of visited) parentEdge[v] = -1;

    // start the named loop at the edge that comes first in the file, where the diagnostic points
    let first = 0;
    for (let k = 1; k < loopEdges.length; k++) if (loopEdges[k] < loopEdges[first]) first = k;
    const ordered = [...loopEdges.slice(first), ...loopEdges.slice(0, first)];
    const firstEdge = ordered[0];
    const names = ordered.map((e) => label((nodes[eFrom[e]] as Record<string, unknown>).id));
    const shown =
      names.length > LOOP_NAMES_SHOWN
        ? [...names.slice(0, LOOP_NAMES_SHOWN - 1), `… (${names.length} nodes in all)`, names[0]]
        : [...names, names[0]];
    out.add(
      'zero-delay-loop',
      `loop with no delay: ${shown.join(' -> ')}; put at least one delay on one of its edges`,
      ['edges', firstEdge],
    );
  }
}

/** Warnings: inputs that feed nothing, nodes from which no output can be reached. */
function reachability(
  nodes: unknown[],
  nodeClass: Int8Array,
  shadowed: Uint8Array,
  nN: number,
  nE: number,
  eFrom: Int32Array,
  eTo: Int32Array,
  outDeg: Int32Array,
  out: Collector,
): void {
  // reverse adjacency, compressed rows
  const start = new Int32Array(nN + 1);
  for (let i = 0; i < nE; i++) if (eFrom[i] >= 0 && eTo[i] >= 0) start[eTo[i] + 1]++;
  for (let v = 0; v < nN; v++) start[v + 1] += start[v];
  const preds = new Int32Array(start[nN]);
  const fill = start.slice(0, nN);
  for (let i = 0; i < nE; i++) if (eFrom[i] >= 0 && eTo[i] >= 0) preds[fill[eTo[i]]++] = eFrom[i];

  const reached = new Uint8Array(nN);
  const queue = new Int32Array(nN);
  let tail = 0;
  for (let v = 0; v < nN; v++) {
    if (nodeClass[v] === OUTPUT) {
      reached[v] = 1;
      queue[tail++] = v;
    }
  }
  // An edge to a node that does not exist is the root cause (`unknown-node`): whatever its
  // source feeds is unknown, so its source and their producers get no follow-on warnings.
  let unknownTarget = false;
  for (let i = 0; i < nE; i++) {
    if (eTo[i] >= 0) continue;
    unknownTarget = true;
    const u = eFrom[i];
    if (u >= 0 && !reached[u]) {
      reached[u] = 1;
      queue[tail++] = u;
    }
  }
  for (let head = 0; head < tail; head++) {
    const v = queue[head];
    for (let q = start[v]; q < start[v + 1]; q++) {
      const u = preds[q];
      if (!reached[u]) {
        reached[u] = 1;
        queue[tail++] = u;
      }
    }
  }
  // An output that nothing feeds: simulation calls it unfed and the RTL holds it at 0.
  if (!unknownTarget) {
    for (let v = 0; v < nN; v++) {
      if (nodeClass[v] !== OUTPUT || shadowed[v] || start[v + 1] > start[v]) continue;
      const id = (nodes[v] as Record<string, unknown>).id as string;
      out.add('unfed-output', `output \`${id}\` has no edge into it; it would never show a value`, ['nodes', v, 'id']);
    }
  }
  for (let v = 0; v < nN; v++) {
    if (reached[v] || nodeClass[v] === BAD || shadowed[v]) continue;
    const id = (nodes[v] as Record<string, unknown>).id as string;
    if (nodeClass[v] === INPUT && outDeg[v] === 0) {
      out.add('unused-input', `input \`${id}\` feeds nothing`, ['nodes', v, 'id']);
    } else if (nodeClass[v] !== OUTPUT) {
      out.add('no-path-to-output', `node \`${id}\` has no path to any output; its result is never used`, ['nodes', v, 'id']);
    }
  }
}

// ------------------------------------------------------------------ normalised design

function normalise(doc: Record<string, unknown>, options: ValidateOptions): Design {
  const units = (doc.units as Record<string, unknown>[]).map(
    (u): Unit => ({ id: u.id as string, kind: u.kind as string, stages: u.stages as number }),
  );
  const adopt = options.adoptDocument === true;
  const nodes = adopt ? (doc.nodes as DfgNode[]) : (doc.nodes as Record<string, unknown>[]).map((n): DfgNode => {
    const node: DfgNode = { id: n.id as string, kind: n.kind as string };
    if (n.time !== undefined) node.time = n.time as number;
    if (n.slot !== undefined) node.slot = n.slot as number;
    if (n.coefficient !== undefined) node.coefficient = n.coefficient as number;
    if (n.op !== undefined) node.op = n.op as NodeOp;
    if (n.format !== undefined) node.format = n.format as string;
    if (n.rounding !== undefined) node.rounding = n.rounding as DfgNode['rounding'];
    if (n.overflow !== undefined) node.overflow = n.overflow as DfgNode['overflow'];
    return node;
  });
  const rawEdges = doc.edges as Record<string, unknown>[];
  const edges = adopt ? (rawEdges as unknown as Edge[]) : new Array<Edge>(rawEdges.length);
  for (let i = 0; i < rawEdges.length; i++) {
    const e = rawEdges[i];
    if (adopt) {
      if (e.delays === undefined) e.delays = 0;
      continue;
    }
    const edge: Edge = { from: e.from as string, to: e.to as string, delays: e.delays === undefined ? 0 : (e.delays as number) };
    if (e.port !== undefined) edge.port = e.port as number;
    edges[i] = edge;
  }
  const folding = (isObj(doc.folding) ? doc.folding : {}) as Record<string, unknown>;
  const rawSets = (isObj(folding.sets) ? folding.sets : {}) as Record<string, (string | null)[]>;
  // fromEntries defines own properties, so no key can reach Object.prototype
  const sets = Object.fromEntries(Object.keys(rawSets).map((k) => [k, rawSets[k].slice()]));
  const rawKinds = isObj(doc.kinds) ? (doc.kinds as Record<string, { time: number }>) : {};
  const kinds = Object.fromEntries(Object.keys(rawKinds).map((k) => [k, { time: rawKinds[k].time }]));
  const design: Design = {
    format: 'pleat/1',
    name: doc.name as string,
    kinds,
    units,
    nodes,
    edges,
    folding: {
      factor: options.factor ?? (folding.factor as number),
      sets,
      latency: folding.latency === 'fixed' ? 'fixed' : 'free',
    },
  };
  if (typeof doc.description === 'string') design.description = doc.description;
  if (typeof doc.clock_ns === 'number') design.clockNs = doc.clock_ns;
  if (isObj(doc.fixed_point)) design.fixedPoint = { ...(doc.fixed_point as FixedPointDefaults) };
  if (Array.isArray(doc.serial) && doc.serial.length) {
    design.serial = (doc.serial as Record<string, unknown>[]).map((p) => ({
      id: p.id as string,
      direction: Array.isArray(p.inputs) ? ('input' as const) : ('output' as const),
      nodes: ((Array.isArray(p.inputs) ? p.inputs : p.outputs) as string[]).slice(),
    }));
  }
  return design;
}

// ------------------------------------------------------------------ entry point

/**
 * Checks a parsed design document against the JSON Schema and the rules of format 1. Never throws
 * for any input. Diagnostics carry `path` and no position; loadDesign adds line and column.
 */
export function validateDesign(doc: unknown, options: ValidateOptions = {}): { design: Design | null; diagnostics: Diagnostic[] } {
  const out = new Collector();
  // A file of another version of the format is judged by that version's rules, not these.
  if (isObj(doc) && typeof doc.format === 'string' && /^pleat\/\d+$/.test(doc.format) && doc.format !== 'pleat/1') {
    out.add('unsupported-format', `format \`${doc.format}\` is not supported; this tool reads format \`pleat/1\``, ['format']);
    return { design: null, diagnostics: out.finish() };
  }
  const validate = schemaValidator();
  const schemaOk = validate(doc) as boolean;
  if (!schemaOk) schemaDiagnostics(doc, validate.errors ?? [], out);
  if (isObj(doc)) {
    if (options.factor !== undefined && !(Number.isInteger(options.factor) && options.factor >= 1 && options.factor <= MAX_FACTOR)) {
      out.add('schema-value', `the folding factor ${showValue(options.factor)} given instead of folding.factor must be an integer in 1..${MAX_FACTOR}`, ['folding', 'factor']);
    } else if (options.unplaced === 'allow' && options.factor === undefined && !isObj(doc.folding)) {
      out.add('schema-required', 'missing required field `folding` (with its `factor`); a plan needs a folding factor: write `folding: { factor: N }` or give the factor to the planner', []);
    }
    semanticChecks(doc, out, options);
  }
  const diagnostics = out.finish();
  const design = schemaOk && out.errors === 0 ? normalise(doc as Record<string, unknown>, options) : null;
  return { design, diagnostics };
}

function operations(n: number): string {
  return n === 1 ? '1 operation' : `${n} operations`;
}
