// Stores one uploaded report as a run. One run per (project, branch, commit): a second upload of
// the same commit, also a concurrent one, returns the first run instead of adding another.
// Uploads that arrive while a write is under way are written together by the next statement
// (one round trip and one commit for all of them), so concurrent CI uploads do not each pay a
// round trip and queue on the branch row one after the other. The statements are prepared once
// per connection of the plain pg pool (server/db/raw.ts).
import type { Report } from '../../../shared/types';
import type { AppContext } from '../../context';
import type { Project } from '../../db/models';
import { rawQuery } from '../../db/raw';
import { RUN_COLUMNS, type RunRow } from './compare';
import { designHeadText, runHeadParts, runHeadSql } from './pageJson';
import { summarizeReport } from './summary';

/** The first line of a commit's message, or its author, bounded: shown in lists, not kept in full. */
function commitMeta(v: unknown, max: number): string | null {
  if (typeof v !== 'string') return null;
  const line = v.split(/\r?\n/, 1)[0]!.trim();
  return line ? line.slice(0, max) : null;
}

export interface StoredRun {
  id: number;
  created: boolean;
  createdAt: Date;
  row: RunRow;
  /**
   * Read by the statement that wrote a new run: whether anyone watches its branch and whether the
   * project has a git host, so that an upload with neither (the usual case) costs no queries after it.
   */
  watched?: boolean;
  hosted?: boolean;
}

type WrittenRow = RunRow & { watched: boolean; hosted: boolean };

/** A new run as written, its two flags apart from its row. */
function written(r: WrittenRow): StoredRun {
  const { watched, hosted, ...row } = r;
  return { id: row.id, created: true, createdAt: row.created_at, row, watched, hosted };
}

/**
 * One statement does it all (the run, its design rows, the branch pointer), so the branch row that
 * every upload to a branch updates is locked only for that statement: uploads to one branch do not
 * queue behind each other's round trips.
 */
async function ingestOne(ctx: AppContext, project: Project, report: Report, opts: IngestOptions = {}): Promise<StoredRun> {
  const { designs, run } = summarizeReport(report);
  const git = report.git;
  const branch = git.branch!;
  const commit = git.commit!.toLowerCase();
  const floor = report.rules?.min_utilization?.value;
  const message = commitMeta(git.message, 500);
  const author = commitMeta(git.author, 200);
  const utilizationFloor = typeof floor === 'number' && Number.isFinite(floor) ? floor : null;
  const [before, after] = runHeadParts({
    branch, commit, base_branch: git.baseBranch ?? null, base_commit: git.baseCommit?.toLowerCase() ?? null, verdict: report.verdict,
    tool_version: report.tool.version, design_count: run.designCount, failed_count: run.failedCount, error_count: run.errorCount,
    utilization: run.utilization, register_minimum: run.registerMinimum, violation_count: run.violationCount,
    commit_message: message, commit_author: author, utilization_floor: utilizationFloor,
  });
  // The id and the time are taken first (the time as the column keeps it, to the millisecond), so
  // the row's page_json (pageJson.ts) is written with the row.
  const inserted = await rawQuery<WrittenRow>(ctx.db,
    `WITH v AS (
       SELECT nextval(pg_get_serial_sequence('runs', 'id'))::int AS id, coalesce($15::timestamptz, now())::timestamptz(3) AS at
     ), ins AS (
       INSERT INTO runs (id, project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count,
                         failed_count, error_count, utilization, register_minimum, violation_count, report, created_at,
                         commit_message, commit_author, utilization_floor, page_json)
       SELECT v.id, $1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14::jsonb, v.at, $27, $28, $29,
              ${runHeadSql('v.id', 'v.at', '$30::text', '$31::text')}
       FROM v
       ON CONFLICT ON CONSTRAINT runs_one_per_commit DO NOTHING
       RETURNING ${RUN_COLUMNS}
     ), designs AS (
       INSERT INTO run_designs (run_id, design_name, file, status, utilization, register_minimum, negative_edge_count,
                                retiming_feasible, violation_count, factor, unit_count, latency_added, page_json)
       SELECT ins.id, d.* FROM ins,
         unnest($16::text[], $17::text[], $18::text[], $19::float8[], $20::int[], $21::int[], $22::bool[], $23::int[],
                $24::int[], $25::int[], $26::int[], $32::text[]) AS d
     ), branch AS (
       INSERT INTO branches (project_id, name, last_run_id, last_run_at)
       SELECT project_id, branch, id, created_at FROM ins
       ON CONFLICT (project_id, name) DO UPDATE SET last_run_id = EXCLUDED.last_run_id, last_run_at = EXCLUDED.last_run_at
       WHERE (branches.last_run_at, coalesce(branches.last_run_id, 0)) < (EXCLUDED.last_run_at, EXCLUDED.last_run_id)
     )
     SELECT ins.*, EXISTS (SELECT 1 FROM watches w WHERE w.project_id = ins.project_id AND w.branch = ins.branch) AS watched,
            EXISTS (SELECT 1 FROM host_connections h WHERE h.project_id = ins.project_id) AS hosted FROM ins`,
    [
        project.id, branch, commit, git.baseBranch ?? null, git.baseCommit?.toLowerCase() ?? null, report.verdict,
        report.tool.version, run.designCount, run.failedCount, run.errorCount, run.utilization, run.registerMinimum,
        run.violationCount, opts.reportText ?? JSON.stringify(report), opts.createdAt ?? null,
        designs.map((d) => d.designName), designs.map((d) => d.file), designs.map((d) => d.status),
        designs.map((d) => d.utilization), designs.map((d) => d.registerMinimum), designs.map((d) => d.negativeEdgeCount),
        designs.map((d) => d.retimingFeasible), designs.map((d) => d.violationCount),
        designs.map((d) => d.factor), designs.map((d) => d.unitCount), designs.map((d) => d.latencyAdded),
        message, author, utilizationFloor, before, after, designs.map(designHeadText),
    ],
  );
  const row = inserted[0];
  if (row) return written(row);
  // Uploaded before (or by a concurrent request that committed first): keep the first run.
  const [existing] = await rawQuery<RunRow>(ctx.db,
    `SELECT ${RUN_COLUMNS} FROM runs WHERE project_id = $1 AND branch = $2 AND commit = $3`,
    [project.id, branch, commit],
  );
  return { id: existing!.id, created: false, createdAt: existing!.created_at, row: existing! };
}

export interface IngestOptions {
  createdAt?: Date;
  /** The report as it was sent, when it is at hand: stored as it is instead of serialised again. */
  reportText?: string;
}

interface Pending extends IngestOptions {
  project: Project;
  report: Report;
  resolve: (r: StoredRun) => void;
  reject: (e: unknown) => void;
}

/** Most uploads written by one statement (its bind parameters are arrays, one element per run or design). */
const MAX_BATCH = 64;
/**
 * Writers at a time per process: one. Two (tried: one batch checked by PostgreSQL while the other
 * commits) made smaller batches that waited on each other's branch row, and measured no better
 * (docs/performance.md, "Third round").
 */
const WRITERS = 1;
type Queue = { items: Pending[]; running: number };
const queues = new WeakMap<AppContext, Queue>();

/**
 * Stores one report as a run. Alone, it is one statement; with other uploads waiting, they are
 * written by one statement together (ingestBatch), each still with its own result.
 */
export function ingestRun(ctx: AppContext, project: Project, report: Report, opts: IngestOptions = {}): Promise<StoredRun> {
  return new Promise<StoredRun>((resolve, reject) => {
    let q = queues.get(ctx);
    if (!q) {
      q = { items: [], running: 0 };
      queues.set(ctx, q);
    }
    q.items.push({ project, report, createdAt: opts.createdAt, reportText: opts.reportText, resolve, reject });
    if (q.running < WRITERS) void drain(ctx, q);
  });
}

async function drain(ctx: AppContext, q: Queue): Promise<void> {
  q.running++;
  try {
    while (q.items.length > 0) {
      const batch = q.items.splice(0, MAX_BATCH);
      if (batch.length === 1) {
        const p = batch[0]!;
        await ingestOne(ctx, p.project, p.report, p).then(p.resolve, p.reject);
        continue;
      }
      try {
        await ingestBatch(ctx, batch);
      } catch {
        // One bad upload must not fail the others: write them one by one, each with its own outcome.
        for (const p of batch) await ingestOne(ctx, p.project, p.report, p).then(p.resolve, p.reject);
      }
    }
  } finally {
    q.running--;
  }
}

/**
 * Writes several uploads with one statement: their runs, design rows and branch pointers. The
 * reports go as one JSON array made of their texts (each was parsed, so each is JSON): a text[]
 * parameter would have every quote and backslash of every report escaped by pg and read back by
 * PostgreSQL's array parser.
 */
async function ingestBatch(ctx: AppContext, batch: Pending[]): Promise<void> {
  // The first upload of each (project, branch, commit) is written; repeats get the stored run.
  const key = (p: Pending) => `${p.project.id}\u0000${p.report.git.branch}\u0000${p.report.git.commit!.toLowerCase()}`;
  const firsts: Pending[] = [];
  const seen = new Set<string>();
  for (const p of batch) {
    if (seen.has(key(p))) continue;
    seen.add(key(p));
    firsts.push(p);
  }
  const runs = firsts.map((p) => {
    const git = p.report.git;
    const floor = p.report.rules?.min_utilization?.value;
    const summary = summarizeReport(p.report);
    const meta = {
      message: commitMeta(git.message, 500), author: commitMeta(git.author, 200),
      floor: typeof floor === 'number' && Number.isFinite(floor) ? floor : null,
    };
    const parts = runHeadParts({
      branch: git.branch!, commit: git.commit!.toLowerCase(), base_branch: git.baseBranch ?? null,
      base_commit: git.baseCommit?.toLowerCase() ?? null, verdict: p.report.verdict, tool_version: p.report.tool.version,
      design_count: summary.run.designCount, failed_count: summary.run.failedCount, error_count: summary.run.errorCount,
      utilization: summary.run.utilization, register_minimum: summary.run.registerMinimum, violation_count: summary.run.violationCount,
      commit_message: meta.message, commit_author: meta.author, utilization_floor: meta.floor,
    });
    return { p, ...summary, meta, parts };
  });
  const col = <T>(f: (r: (typeof runs)[number]) => T) => runs.map(f);
  const designRows = runs.flatMap((r, ord) => r.designs.map((d, k) => ({ ord, k, d })));
  const dcol = <T>(f: (x: (typeof designRows)[number]) => T) => designRows.map(f);
  const rows = await rawQuery<WrittenRow & { ord: number }>(ctx.db,
    `WITH input AS (
       SELECT t.*, rj.report, nextval(pg_get_serial_sequence('runs', 'id'))::int AS id, coalesce(t.given_at, now())::timestamptz(3) AS at
       FROM unnest($1::int[], $2::text[], $3::text[], $4::text[], $5::text[], $6::text[], $7::text[], $8::int[], $9::int[],
                   $10::int[], $11::float8[], $12::int[], $13::int[], $15::timestamptz[], $16::int[],
                   $27::text[], $28::text[], $29::float8[], $30::text[], $31::text[])
         AS t(project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count, failed_count, error_count,
              utilization, register_minimum, violation_count, given_at, ord, commit_message, commit_author, utilization_floor, head_before, head_after)
       JOIN jsonb_array_elements($14::jsonb) WITH ORDINALITY AS rj(report, n) ON rj.n = t.ord + 1
     ), ins AS (
       INSERT INTO runs (id, project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count,
                         failed_count, error_count, utilization, register_minimum, violation_count, report, created_at,
                         commit_message, commit_author, utilization_floor, page_json)
       SELECT id, project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count, failed_count, error_count,
              utilization, register_minimum, violation_count, report, at, commit_message, commit_author, utilization_floor,
              ${runHeadSql('id', 'at', 'head_before', 'head_after')}
       FROM input ORDER BY ord
       ON CONFLICT ON CONSTRAINT runs_one_per_commit DO NOTHING
       RETURNING ${RUN_COLUMNS}
     ), matched AS (
       SELECT ins.*, input.ord FROM ins JOIN input ON input.id = ins.id
     ), designs AS (
       INSERT INTO run_designs (run_id, design_name, file, status, utilization, register_minimum, negative_edge_count,
                                retiming_feasible, violation_count, factor, unit_count, latency_added, page_json)
       SELECT m.id, d.design_name, d.file, d.status, d.utilization, d.register_minimum, d.negative_edge_count, d.retiming_feasible,
              d.violation_count, d.factor, d.unit_count, d.latency_added, d.page_json
       FROM unnest($17::int[], $18::int[], $19::text[], $20::text[], $21::text[], $22::float8[], $23::int[], $24::int[], $25::bool[], $26::int[],
                   $32::int[], $33::int[], $34::int[], $35::text[])
         AS d(ord, k, design_name, file, status, utilization, register_minimum, negative_edge_count, retiming_feasible, violation_count,
              factor, unit_count, latency_added, page_json)
       JOIN matched m ON m.ord = d.ord
       ORDER BY d.ord, d.k
     ), branch AS (
       INSERT INTO branches (project_id, name, last_run_id, last_run_at)
       SELECT DISTINCT ON (project_id, branch) project_id, branch, id, created_at FROM ins ORDER BY project_id, branch, created_at DESC, id DESC
       ON CONFLICT (project_id, name) DO UPDATE SET last_run_id = EXCLUDED.last_run_id, last_run_at = EXCLUDED.last_run_at
       WHERE (branches.last_run_at, coalesce(branches.last_run_id, 0)) < (EXCLUDED.last_run_at, EXCLUDED.last_run_id)
     )
     SELECT m.*, EXISTS (SELECT 1 FROM watches w WHERE w.project_id = m.project_id AND w.branch = m.branch) AS watched,
            EXISTS (SELECT 1 FROM host_connections h WHERE h.project_id = m.project_id) AS hosted FROM matched m`,
    [
        col((r) => r.p.project.id), col((r) => r.p.report.git.branch!), col((r) => r.p.report.git.commit!.toLowerCase()),
        col((r) => r.p.report.git.baseBranch ?? null), col((r) => r.p.report.git.baseCommit?.toLowerCase() ?? null),
        col((r) => r.p.report.verdict), col((r) => r.p.report.tool.version), col((r) => r.run.designCount),
        col((r) => r.run.failedCount), col((r) => r.run.errorCount), col((r) => r.run.utilization), col((r) => r.run.registerMinimum),
        col((r) => r.run.violationCount), `[${col((r) => r.p.reportText ?? JSON.stringify(r.p.report)).join(',')}]`, col((r) => r.p.createdAt ?? null), runs.map((_, i) => i),
        dcol((x) => x.ord), dcol((x) => x.k), dcol((x) => x.d.designName), dcol((x) => x.d.file), dcol((x) => x.d.status),
        dcol((x) => x.d.utilization), dcol((x) => x.d.registerMinimum), dcol((x) => x.d.negativeEdgeCount),
        dcol((x) => x.d.retimingFeasible), dcol((x) => x.d.violationCount),
        col((r) => r.meta.message), col((r) => r.meta.author), col((r) => r.meta.floor), col((r) => r.parts[0]), col((r) => r.parts[1]),
        dcol((x) => x.d.factor), dcol((x) => x.d.unitCount), dcol((x) => x.d.latencyAdded), dcol((x) => designHeadText(x.d)),
    ],
  );
  const created = new Map<string, WrittenRow>();
  for (const row of rows) {
    const { ord, ...run } = row;
    created.set(key(runs[ord]!.p), run);
  }
  // Settled in upload order; a run another request wrote first is read back as before.
  const settledKeys = new Set<string>();
  for (const p of batch) {
    const k = key(p);
    const row = created.get(k);
    if (row && !settledKeys.has(k)) {
      settledKeys.add(k);
      p.resolve(written(row));
    } else {
      await ingestOne(ctx, p.project, p.report, p).then(p.resolve, p.reject);
    }
  }
}
