// Hardware summaries of `pleat rtl --area` in uploads: validated by the upload schema, stored per
// run and design (run_design_hardware, migration 009), and given back by the branch history.
// Real PostgreSQL, the real HTTP stack. The summaries' figures are made up for the test.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { HardwareSummary } from '../../../shared/report/hardwareSummary';
import { cookieFor, designEntry, makeCiToken, makeMember, makeProject, makeReport, randomCommit } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

let t: TestServer;
let project: Project;
let token: string;
let viewer: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  token = (await makeCiToken(t.ctx, project)).secret;
  viewer = await makeMember(t.ctx, project, 'viewer');
});
afterAll(async () => t?.close());

const upload = (report: unknown) =>
  t.http().post(`/api/projects/${project.slug}/runs`).set('Authorization', `Bearer ${token}`).send(report as object);
const read = (path: string) => t.http().get(path).set('Cookie', cookieFor(t.ctx, viewer));

function summary(design: string, cells: number, depth: number | null): HardwareSummary {
  return {
    format: 'pleat-hardware',
    version: 1,
    design,
    file: `hw/${design}.fold.yaml`,
    top: design,
    tool: 'Yosys 0.23',
    compared: { stages: 'folded', multipliers: 'general', width: 16, coefFrac: 14 },
    folded: { cells, flipFlops: 40, depth, factor: 4 },
    parallel: { cells: cells * 3, flipFlops: 90, depth: 20, factor: 1 },
  };
}

describe('hardware summaries in uploads', () => {
  it('stores the summary of each design and the branch history returns it per run, oldest to newest', async () => {
    const branch = 'feature/area';
    for (const [cells, depth] of [[900, 31], [850, null]] as const) {
      const report = makeReport({ branch, commit: randomCommit(), designs: [{ ...designEntry('notch'), hardware: summary('notch', cells, depth) }, designEntry('plain')] });
      const res = await upload(report);
      expect(res.status, JSON.stringify(res.body)).toBe(201);
    }
    const page = await read(`/api/projects/${project.slug}/branches/${encodeURIComponent(branch)}/runs`);
    expect(page.status).toBe(200);
    const trend = [...page.body.runs].reverse().map((r: { designs: { name: string; hardware?: unknown }[] }) => r.designs.find((d) => d.name === 'notch')!.hardware);
    expect(trend).toEqual([
      { version: 1, folded: { cells: 900, flipFlops: 40, depth: 31, factor: 4 }, parallel: { cells: 2700, flipFlops: 90, depth: 20, factor: 1 } },
      { version: 1, folded: { cells: 850, flipFlops: 40, depth: null, factor: 4 }, parallel: { cells: 2550, flipFlops: 90, depth: 20, factor: 1 } },
    ]);
    // A design uploaded without a summary reads as before: no hardware field.
    for (const r of page.body.runs) expect(r.designs.find((d: { name: string }) => d.name === 'plain')).not.toHaveProperty('hardware');
    // The whole summary is kept beside the columns.
    const [rows] = await t.db.sequelize.query('SELECT summary FROM run_design_hardware h JOIN run_designs rd ON rd.id = h.run_design_id JOIN runs r ON r.id = rd.run_id WHERE r.branch = $1 ORDER BY h.run_design_id', { bind: [branch] });
    expect((rows as { summary: HardwareSummary }[]).map((x) => x.summary.folded.cells)).toEqual([900, 850]);
  });

  it('a repeated upload of the commit fills in a summary the first one lacked, and keeps a stored one', async () => {
    const commit = randomCommit();
    const branch = 'feature/area-repeat';
    expect((await upload(makeReport({ branch, commit, designs: [designEntry('notch')] }))).status).toBe(201);
    expect((await upload(makeReport({ branch, commit, designs: [{ ...designEntry('notch'), hardware: summary('notch', 700, 12) }] }))).status).toBe(200);
    expect((await upload(makeReport({ branch, commit, designs: [{ ...designEntry('notch'), hardware: summary('notch', 1, 1) }] }))).status).toBe(200);
    const page = await read(`/api/projects/${project.slug}/branches/${encodeURIComponent(branch)}/runs`);
    expect(page.body.runs).toHaveLength(1);
    expect(page.body.runs[0].designs[0].hardware.folded.cells).toBe(700);
  });

  it('refuses a summary that is not one (400, the value named) and stores nothing', async () => {
    const bad = { ...summary('notch', 10, 2), folded: { cells: 10, flipFlops: -3, depth: 2, factor: 4 } };
    const res = await upload(makeReport({ branch: 'feature/area-bad', designs: [{ ...designEntry('notch'), hardware: bad as HardwareSummary }] }));
    expect(res.status).toBe(400);
    expect(res.body.message ?? JSON.stringify(res.body)).toMatch(/\/designs\/0\/hardware\/folded\/flipFlops/);
    const page = await read(`/api/projects/${project.slug}/branches/feature%2Farea-bad/runs`);
    expect(page.body.runs ?? []).toHaveLength(0);
  });
});
