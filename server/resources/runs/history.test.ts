// The history page's JSON is written by PostgreSQL (history.ts, server/db/jsonSql.ts). It must be
// byte for byte what the presenters (presentRun, presentDesign, encodeCursor) and JSON.stringify
// make of the same rows read through Sequelize, as the route sent before: the reference below is
// that code path. Number notation: ECMA-262 Number::toString (the exponent thresholds 1e-7 and
// 1e21); dates: Date.prototype.toISOString; both restated from the standard, no other source.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Project, User } from '../../db/models';
import { jsonDate, jsonFloat, jsonString, UNWRITTEN } from '../../db/jsonSql';
import { rawQuery } from '../../db/raw';
import { cookieFor, designEntry, makeMember, makeProject, makeReport } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import { presentedPage } from './history';
import { ingestRun } from './ingest';
import type { Report } from '../../../shared/types';

let t: TestServer;
let project: Project;
let viewer: User;
beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  viewer = await makeMember(t.ctx, project, 'viewer');
});
afterAll(async () => t?.close());

/** The page as the route built it before: rows through Sequelize, presented and stringified. */
const presented = (branch: string, o: { limit: number; cursor?: string; design?: string; offset?: number }) => {
  const [at, id] = o.cursor ? o.cursor.split(',') : [];
  return presentedPage(t.ctx, project.id, { branch, at: o.cursor ? { at: new Date(at!), id: Number(id) } : null, design: o.design, limit: o.limit, offset: o.offset ?? 0 });
};

// Doubles of every notation JavaScript and PostgreSQL write differently (common practice: the
// boundaries of both notations and their neighbours).
const DOUBLES = [
  0, -0, 1, -1, 0.5, 1 / 3, 2 / 3, 0.1, 0.7, 0.123456789012345, 1e-4, 9.999999999999999e-5, 1e-5, 1.5e-5, -2.5e-6, 1e-6, 9.99e-7, 1e-7,
  1.2345e-7, 5e-324, 2.2250738585072014e-308, 123456789012345.6, 999999999999999.9, 1e15, 1234567890123456.7, 1.5e20, 1e21, 1.7976931348623157e308,
  -1e21, 0.0001234, 3e-10, 12345678.875, 4.35, 0.000099, Number.EPSILON, Number.MAX_SAFE_INTEGER, 2 ** 60,
];

describe('JSON written by PostgreSQL (server/db/jsonSql.ts)', () => {
  it('writes doubles as JSON.stringify does, including the notations where the two differ', async () => {
    const rng = (() => { let s = 7; return () => (s = (s * 48271) % 2147483647) / 2147483647; })();
    const random = Array.from({ length: 2000 }, () => (rng() - 0.5) * 10 ** Math.floor(rng() * 60 - 30));
    const xs = [...DOUBLES, ...random];
    const rows = await rawQuery<{ i: number; j: string }>(t.ctx.db, `SELECT i::int AS i, ${jsonFloat('x')} AS j FROM unnest($1::float8[]) WITH ORDINALITY AS u(x, i)`, [xs.map(String)]);
    const got = rows.sort((a, b) => a.i - b.i).map((r) => r.j);
    // From 1e15 up the SQL gives way to the presenters (UNWRITTEN); below, every double is written as JavaScript writes it.
    expect(got).toEqual(xs.map((x) => (Math.abs(x) >= 1e15 ? UNWRITTEN : JSON.stringify(x))));
    const [special] = await rawQuery<{ a: string; b: string; c: string }>(t.ctx.db, `SELECT ${jsonFloat(`'NaN'::float8`)} AS a, ${jsonFloat(`'-Infinity'::float8`)} AS b, ${jsonFloat('NULL::float8')} AS c`, []);
    expect(special).toEqual({ a: 'null', b: 'null', c: 'null' });
  });

  it('writes text and timestamps as JSON.stringify and toISOString do', async () => {
    const texts = ['plain', 'quote " and \\ backslash', 'tab\tnew\nline\r\u0008\u000c', '\u0001\u001f\u007f', 'ünï €\u2028\u2029 🎛', ''];
    const rows = await rawQuery<{ i: number; j: string }>(t.ctx.db, `SELECT i::int AS i, ${jsonString('x')} AS j FROM unnest($1::text[]) WITH ORDINALITY AS u(x, i)`, [texts]);
    expect(rows.sort((a, b) => a.i - b.i).map((r) => r.j)).toEqual(texts.map((x) => JSON.stringify(x)));
    const stamps = ['2026-12-02 14:35:01.123999+00', '2026-01-01 00:00:00+00', '1999-12-31 23:59:59.999999+00', '2026-06-30 23:00:00.000001-05', '0099-03-04 05:06:07.08+00'];
    const dates = await rawQuery<{ i: number; j: string; d: Date }>(t.ctx.db, `SELECT i::int AS i, ${jsonDate('x')} AS j, x AS d FROM unnest($1::timestamptz[]) WITH ORDINALITY AS u(x, i)`, [stamps]);
    expect(dates.sort((a, b) => a.i - b.i).map((r) => r.j)).toEqual(dates.map((r) => JSON.stringify(r.d)));
  });
});

describe('history page: the bytes of the presenters', () => {
  it('matches them on runs with nulls, odd numbers and text, hardware summaries, cursors, offsets and the design filter', async () => {
    const db = t.ctx.db.sequelize;
    // 23 runs on one branch: every optional column null on some, floats of every notation, text that needs escaping.
    for (let i = 0; i < 23; i++) {
      const u = i % 5 === 0 ? null : DOUBLES[i % DOUBLES.length]!;
      const [run] = await db.query<{ id: number }>(
        `INSERT INTO runs (project_id, branch, commit, base_branch, base_commit, verdict, tool_version, design_count, failed_count, error_count,
                           utilization, register_minimum, violation_count, report, created_at, commit_message, commit_author, utilization_floor)
         VALUES ($1, 'feature/x', $2, $3, $4, $5, $6, 2, $7, 0, $8, $9, $10, '{}', $11, $12, $13, $14) RETURNING id`,
        {
          bind: [project.id, i.toString(16).padStart(40, 'a'), i % 3 ? 'main' : null, i % 3 ? 'b'.repeat(40) : null, ['pass', 'fail', 'error'][i % 3],
            `v${i} "q"`, i % 2, u, i % 4 ? 10 + i : null, i % 7,
            // Microseconds that the API truncates to milliseconds; two runs share a timestamp (the id orders them).
            `2026-11-${String(1 + Math.floor(i / 2)).padStart(2, '0')} 10:00:0${i % 2 ? 0 : 1}.${String(123456 + i * 1111).slice(0, 6)}+00`,
            i % 4 === 1 ? null : `fix \u0001 "${i}"\ttab ü`, i % 6 ? `Ann \\ ${i}` : null, i % 2 ? 0.75 : i % 4 ? 1e-5 : null],
          type: QueryTypes.SELECT,
        },
      );
      for (const [k, name] of ['fir', 'notch'].entries()) {
        if (i % 9 === 4 && k === 1) continue; // a run with one design
        const [d] = await db.query<{ id: number }>(
          `INSERT INTO run_designs (run_id, design_name, file, status, utilization, register_minimum, negative_edge_count, retiming_feasible,
                                   violation_count, factor, unit_count, latency_added)
           VALUES ($1, $2, $3, 'pass', $4, $5, $6, $7, 0, $8, $9, $10) RETURNING id`,
          { bind: [run!.id, name, `designs/${name} "${i}".fold.yaml`, k ? 2 / 3 : (i % 3 ? 3e-7 : null), i % 2 ? 4 : null, i % 3 ? 0 : null,
            i % 4 === 0 ? null : i % 2 === 0, i % 5 ? 3 : null, i % 5 ? 2 : null, i % 5 ? -1 : null], type: QueryTypes.SELECT },
        );
        if ((i + k) % 4 === 0) {
          await db.query(
            `INSERT INTO run_design_hardware (run_design_id, version, folded_cells, folded_flip_flops, folded_depth, folded_factor,
                                              parallel_cells, parallel_flip_flops, parallel_depth, parallel_factor, summary)
             VALUES ($1, 1, 100, 20, $2, 3, 300, 60, 4, 1, '{}')`, { bind: [d!.id, i % 8 ? 7 : null] });
        }
      }
    }
    const cookie = cookieFor(t.ctx, viewer);
    const get = (q: string) => t.http().get(`/api/projects/${project.slug}/branches/feature%2Fx/runs${q}`).set('Cookie', cookie);
    const check = async (q: string, o: Parameters<typeof presented>[1]) => {
      const res = await get(q);
      expect(res.status).toBe(200);
      expect(res.headers['content-type']).toBe('application/json; charset=utf-8');
      expect(res.text).toBe(await presented('feature/x', o));
      return JSON.parse(res.text) as { nextCursor: string | null };
    };
    // Every page of 5 by the cursor, to the end.
    let cursor: string | null = null;
    let pages = 0;
    do {
      const page: { nextCursor: string | null } = await check(`?limit=5${cursor ? `&cursor=${encodeURIComponent(cursor)}` : ''}`, { limit: 5, cursor: cursor ?? undefined });
      cursor = page.nextCursor;
      pages++;
    } while (cursor);
    expect(pages).toBe(5);
    await check('', { limit: 50 });
    await check('?limit=23', { limit: 23 });
    await check('?limit=22', { limit: 22 });
    await check('?limit=4&offset=8', { limit: 4, offset: 8 });
    await check('?limit=7&design=notch', { limit: 7, design: 'notch' });
    await check('?limit=3&offset=100', { limit: 3, offset: 100 });
    // Each row's JSON is written with the row (page_json, migration 011): an UPDATE rewrites it (the
    // migration fills earlier rows the same way), also from a session whose float notation differs.
    await db.transaction(async (transaction) => {
      await db.query('SET LOCAL extra_float_digits = 3', { transaction });
      await db.query(`UPDATE runs SET commit_message = 'changed \\ "m"', utilization = 0.1 + 0.2, utilization_floor = NULL WHERE project_id = $1 AND branch = 'feature/x' AND commit LIKE '%1'`, { bind: [project.id], transaction });
      await db.query(`UPDATE run_designs SET factor = 9, utilization = 1e-6 WHERE design_name = 'fir' AND run_id IN (SELECT id FROM runs WHERE project_id = $1)`, { bind: [project.id], transaction });
      await db.query('UPDATE run_design_hardware SET folded_depth = NULL, parallel_cells = 301', { transaction });
    });
    await check('', { limit: 50 });
    await check('?limit=7&design=fir', { limit: 7, design: 'fir' });
    // A number from 1e15 up: the page is presented in JavaScript, with the same bytes.
    await db.query(
      `INSERT INTO runs (project_id, branch, commit, verdict, tool_version, design_count, failed_count, error_count, utilization, violation_count, report)
       VALUES ($1, 'big', $2, 'pass', 'v', 0, 0, 0, $3, 0, '{}')`, { bind: [project.id, 'c'.repeat(40), 2 ** 60 + 2 ** 9] });
    const big = await t.http().get(`/api/projects/${project.slug}/branches/big/runs`).set('Cookie', cookie);
    expect(big.text).toBe(await presented('big', { limit: 50 }));
    expect(big.text).toContain('"utilization":1152921504606847500');
    // A branch with no runs.
    const empty = await t.http().get(`/api/projects/${project.slug}/branches/none/runs`).set('Cookie', cookie);
    expect(empty.text).toBe('{"runs":[],"nextCursor":null}');
  });
});

describe('history page: runs as uploads write them', () => {
  it('matches the presenters for runs written alone and together, with the texts the upload made (pageJson.ts)', async () => {
    const odd = (i: number) => {
      const r = makeReport({
        branch: 'up/load', baseBranch: i % 2 ? 'main' : null, baseCommit: i % 2 ? 'ABCDEF1234567' : null,
        designs: [
          designEntry(`fir "${i}" \\ ü`, { utilization: DOUBLES[(3 * i) % DOUBLES.length]! % 1e15, registers: i % 3 ? 5 : null }),
          designEntry('notch', { status: i % 4 ? 'fail' : 'error', utilization: 1e-6 * (i + 1) }),
        ],
      });
      r.git.commit = r.git.commit!.toUpperCase();
      (r.git as Record<string, unknown>).message = i % 3 ? `fix\tthe "tap" ${i}\nsecond line` : undefined;
      (r.git as Record<string, unknown>).author = i % 2 ? 'Zoë <z@x>' : undefined;
      if (i % 2) r.rules = { min_utilization: { value: 0.1 + 0.2 * i, source: 'team' } } as unknown as Report['rules'];
      return r;
    };
    // One alone, then eight at once (written by one statement together), one of them a repeat.
    await ingestRun(t.ctx, project, odd(0));
    const together = Array.from({ length: 8 }, (_, i) => odd(i + 1));
    together.push({ ...together[2]!, git: { ...together[2]!.git } });
    await Promise.all(together.map((r) => ingestRun(t.ctx, project, r)));
    const cookie = cookieFor(t.ctx, viewer);
    for (const [q, o] of [['', { limit: 50 }], ['?limit=4', { limit: 4 }], ['?limit=3&design=notch', { limit: 3, design: 'notch' }]] as const) {
      const res = await t.http().get(`/api/projects/${project.slug}/branches/up%2Fload/runs${q}`).set('Cookie', cookie);
      expect(res.status).toBe(200);
      expect(res.text).toBe(await presented('up/load', o));
    }
    const all = JSON.parse((await t.http().get(`/api/projects/${project.slug}/branches/up%2Fload/runs`).set('Cookie', cookie)).text) as { runs: { message: string | null; author: string | null; utilizationFloor: number | null }[] };
    expect(all.runs).toHaveLength(9);
    // Runs written together keep the commit's message, author and floor (they once lost them).
    expect(all.runs.filter((r) => r.message !== null).length).toBeGreaterThan(3);
    expect(all.runs.filter((r) => r.author === 'Zoë <z@x>').length).toBe(4);
  });
});
