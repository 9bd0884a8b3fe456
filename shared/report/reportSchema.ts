// The JSON Schema of an uploaded report (format pleat-report/1 with the git facts the server files
// it under), shared by the server (POST /api/projects/:slug/runs) and the CLI (`pleat upload`,
// `pleat check --upload` check what they send before sending it). Besides the schema, every value
// of the report is walked once for what JSON allows but PostgreSQL's jsonb and integer columns do
// not: a NUL character, a lone UTF-16 surrogate, nesting deeper than any report has, integers
// beyond the 32-bit columns. docs/server.md lists the limits.
import { Ajv, type ErrorObject, type ValidateFunction } from 'ajv';
import type { Report } from '../types';
import { hardwareSummarySchema } from './hardwareSummary';

/** PostgreSQL's `integer`: counts the server files in integer columns stay at or below this. */
export const MAX_INT32 = 2_147_483_647;
/** A report of the CLI nests about 10 levels; 64 leaves room for additions and stops a parser bomb. */
export const MAX_REPORT_DEPTH = 64;

/**
 * Characters a branch name may not hold: whitespace, C0/C1 controls, bidirectional overrides and
 * isolates, zero-width characters and the byte-order mark. They would show one name and mean
 * another on the history pages (the trick known as "trojan source"; common practice, no source).
 */
export const BRANCH_FORBIDDEN = /[\s\x00-\x1f\x7f-\x9f\u00ad\u061c\u180e\u200b-\u200f\u202a-\u202e\u2060-\u2064\u2066-\u2069\ufeff]/;
const BRANCH_PATTERN = `^[^${BRANCH_FORBIDDEN.source.slice(1, -1)}]+$`;
export const BRANCH_MESSAGE = 'must be 1 to 255 characters without whitespace, control, bidirectional-override or zero-width characters';

/** The reason a branch name is refused, or null. Escapes the offending character so it can be shown. */
export function branchNameProblem(name: string): string | null {
  if (name.length < 1 || name.length > 255) return `a branch name ${BRANCH_MESSAGE}`;
  const m = BRANCH_FORBIDDEN.exec(name);
  if (m) return `a branch name ${BRANCH_MESSAGE}; found U+${m[0].codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')} at character ${m.index + 1}`;
  return null;
}

const nullable = (schema: object) => ({ anyOf: [schema, { type: 'null' }] });
const branch = { type: 'string', minLength: 1, maxLength: 255, pattern: BRANCH_PATTERN, 'x-message': BRANCH_MESSAGE };
const commit = { type: 'string', pattern: '^[0-9a-fA-F]{7,64}$', 'x-message': 'must be 7 to 64 hexadecimal digits' };
const count = { type: 'integer', minimum: 0, maximum: MAX_INT32 };

/** What the server files from a report; fields the CLI adds later pass through untouched. */
export const uploadReportSchema = {
  type: 'object',
  required: ['format', 'tool', 'git', 'verdict', 'designs'],
  properties: {
    format: { const: 'pleat-report/1' },
    tool: {
      type: 'object',
      required: ['name', 'version'],
      properties: { name: { type: 'string' }, version: { type: 'string', minLength: 1, maxLength: 64 } },
    },
    git: {
      type: 'object',
      required: ['branch', 'commit'],
      properties: {
        branch,
        commit,
        baseBranch: nullable(branch),
        baseCommit: nullable(commit),
        message: nullable({ type: 'string', maxLength: 500 }),
        author: nullable({ type: 'string', maxLength: 200 }),
      },
    },
    verdict: { enum: ['pass', 'fail', 'error'] },
    rules: { type: 'object' },
    designs: {
      type: 'array',
      maxItems: 10_000,
      items: {
        type: 'object',
        required: ['file', 'status', 'diagnostics', 'violations'],
        properties: {
          file: { type: 'string', minLength: 1, maxLength: 1000 },
          name: nullable({ type: 'string', maxLength: 255 }),
          status: { enum: ['pass', 'fail', 'error'] },
          diagnostics: { type: 'array', items: { type: 'object' } },
          violations: { type: 'array', items: { type: 'object' } },
          edges: nullable({
            type: 'array',
            items: { type: 'object', properties: { foldedDelay: nullable({ type: 'number' }) } },
          }),
          // A utilization is a fraction of the units' cycles (0 to 1).
          utilization: nullable({ type: 'object', required: ['overall'], properties: { overall: { type: 'number', minimum: 0, maximum: 1 } } }),
          registers: nullable({ type: 'object', required: ['minimum'], properties: { minimum: count } }),
          retiming: nullable({ type: 'object', properties: { feasible: { type: 'boolean' } } }),
          // Each output's latency and the output that forces the shared value (docs/analysis.md).
          outputLatency: {
            type: 'object',
            required: ['shared', 'outputs', 'forcedBy'],
            properties: {
              shared: { type: 'number' },
              outputs: { type: 'array', items: { type: 'object', required: ['node', 'latency', 'needs'], properties: { node: { type: 'string' }, latency: { type: 'number' }, needs: { type: 'number' } } } },
              forcedBy: nullable({ type: 'object', required: ['node', 'by', 'options'], properties: { node: { type: 'string' }, by: { type: 'number' }, options: { type: 'array', items: { type: 'string' } } } }),
            },
          },
          // Attached by `--hardware-summary` (docs/cli.md): area and depth of `pleat rtl --area`.
          hardware: nullable(hardwareSummarySchema),
        },
      },
    },
  },
} as const;

export interface ReportProblem {
  /** JSON pointer of the value ('/' for the whole report). */
  path: string;
  message: string;
}

// Compiled on first use: `pleat check` loads this module for --upload, and compiling costs
// more than a whole check of a small design. A valid report (the usual case) is checked by a
// validator that stops at the first error and keeps no schema in its errors; only a report it
// refuses is checked again by the one that collects every error with its schema for the
// messages. Both compile the same schema, so they agree on what is valid.
let quick: ValidateFunction | null = null;
let compiled: ValidateFunction | null = null;
function validateSchema(data: unknown): boolean {
  quick ??= new Ajv({ strict: false }).compile(uploadReportSchema);
  validateSchema.errors = null;
  if (quick(data)) return true;
  compiled ??= new Ajv({ allErrors: true, strict: false, verbose: true }).compile(uploadReportSchema);
  const ok = compiled(data);
  validateSchema.errors = compiled.errors;
  return ok;
}
validateSchema.errors = null as ValidateFunction['errors'];

const LONE_SURROGATE = /[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/;

function pointer(parts: (string | number)[]): string {
  return parts.length ? '/' + parts.map((p) => String(p).replace(/~/g, '~0').replace(/\//g, '~1')).join('/') : '/';
}

function stringProblem(s: string): string | null {
  if (s.includes('\u0000')) return 'contains a NUL character (U+0000), which the server cannot store';
  if (LONE_SURROGATE.test(s)) return 'contains a lone UTF-16 surrogate (not valid Unicode text)';
  return null;
}

/** True when storableJsonProblems would find something: the same tests, without making paths. */
function hasStorableProblem(value: unknown): boolean {
  const stack: unknown[] = [value];
  const depths: number[] = [0];
  while (stack.length) {
    const v = stack.pop();
    const depth = depths.pop()!;
    if (typeof v === 'string') {
      if (stringProblem(v)) return true;
    } else if (typeof v === 'number') {
      if (!Number.isFinite(v)) return true;
    } else if (v && typeof v === 'object') {
      if (depth >= MAX_REPORT_DEPTH) return true;
      if (Array.isArray(v)) {
        for (const x of v) {
          stack.push(x);
          depths.push(depth + 1);
        }
      } else {
        for (const k in v) {
          if (!Object.prototype.hasOwnProperty.call(v, k)) continue;
          if (stringProblem(k)) return true;
          stack.push((v as Record<string, unknown>)[k]);
          depths.push(depth + 1);
        }
      }
    }
  }
  return false;
}

/**
 * Walks every value without recursion (a deep document cannot overflow the stack) and reports
 * the first problems: too deep, a string or key that is not storable text, a number that is not
 * finite (1e999 parses to Infinity).
 */
export function storableJsonProblems(value: unknown, max = 20): ReportProblem[] {
  // The usual document has no problem: one walk without paths says so, and only a document with
  // a problem is walked again for where.
  if (!hasStorableProblem(value)) return [];
  const problems: ReportProblem[] = [];
  const stack: { v: unknown; path: (string | number)[] }[] = [{ v: value, path: [] }];
  while (stack.length && problems.length < max) {
    const { v, path } = stack.pop()!;
    if (typeof v === 'string') {
      const p = stringProblem(v);
      if (p) problems.push({ path: pointer(path), message: p });
    } else if (typeof v === 'number') {
      if (!Number.isFinite(v)) problems.push({ path: pointer(path), message: 'is not a finite number' });
    } else if (v && typeof v === 'object') {
      if (path.length >= MAX_REPORT_DEPTH) {
        problems.push({ path: pointer(path.slice(0, 8)) + '/...', message: `nests deeper than ${MAX_REPORT_DEPTH} levels` });
        continue;
      }
      if (Array.isArray(v)) {
        for (let i = v.length - 1; i >= 0; i--) stack.push({ v: v[i], path: [...path, i] });
      } else {
        for (const [k, x] of Object.entries(v)) {
          const p = stringProblem(k);
          if (p) problems.push({ path: pointer([...path, k]), message: `has a key that ${p}` });
          stack.push({ v: x, path: [...path, k] });
        }
      }
    }
  }
  return problems;
}

function schemaProblem(e: ErrorObject): ReportProblem {
  const custom = (e.parentSchema as { 'x-message'?: string } | undefined)?.['x-message'];
  const message = e.keyword === 'pattern' && custom ? custom : e.message ?? 'is not valid';
  return { path: e.instancePath || '/', message };
}

/** Sums the server keeps in integer columns must fit them too. */
function totalProblems(report: Report): ReportProblem[] {
  let registers = 0;
  let violations = 0;
  for (const d of report.designs) {
    if (typeof d.registers?.minimum === 'number') registers += d.registers.minimum;
    violations += Array.isArray(d.violations) ? d.violations.length : 0;
  }
  const out: ReportProblem[] = [];
  if (registers > MAX_INT32) out.push({ path: '/designs', message: `the register minima add up to ${registers}, more than ${MAX_INT32}` });
  if (violations > MAX_INT32) out.push({ path: '/designs', message: `the violations add up to more than ${MAX_INT32}` });
  return out;
}

export type UploadCheck = { ok: true; report: Report } | { ok: false; problems: ReportProblem[]; message: string };

/** Checks a parsed report before it is sent (CLI) or stored (server). */
export function checkUploadReport(value: unknown): UploadCheck {
  let problems = storableJsonProblems(value);
  if (!problems.length && !validateSchema(value)) {
    // anyOf repeats the problem of each branch; the branch's own message is the useful one.
    // anyOf (nullable fields) repeats each branch's problem; keep the branch that is not "must be null".
    const errors = validateSchema.errors ?? [];
    const real = errors.filter((e) => e.keyword !== 'anyOf'
      && !(e.keyword === 'type' && (e.params as { type?: string }).type === 'null' && errors.some((o) => o !== e && o.keyword !== 'anyOf' && o.instancePath.startsWith(e.instancePath))));
    problems = real.slice(0, 20).map(schemaProblem);
  }
  if (!problems.length) problems = totalProblems(value as Report);
  if (!problems.length) return { ok: true, report: value as Report };
  const first = problems[0]!;
  return { ok: false, problems, message: `${first.path} ${first.message}` };
}
