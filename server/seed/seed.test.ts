// The demo seed runs the real engine over the examples: check the story it promises (a passing
// trunk, a branch that regresses, one that fails) and that seeding twice adds nothing.
import { mkdtempSync, rmSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { hardwareSummaryProblem } from '../../shared/report/hardwareSummary';
import { cookieFor } from '../test/factories';
import { startTestServer, type TestServer } from '../test/server';
import { DEMO_ACCOUNTS, DEMO_PASSWORD, DEMO_PROJECT, seedDemo } from './seed';

let t: TestServer;
let root: string;
beforeAll(async () => {
  t = await startTestServer();
  // The seed writes the CI token into <root>/.data: a root of the test's own, not the checkout.
  root = mkdtempSync(join(tmpdir(), 'pleat-seed-'));
  symlinkSync(resolve('examples'), join(root, 'examples'));
  t.ctx.config.root = root;
});
afterAll(async () => {
  await t?.close();
  rmSync(root, { recursive: true, force: true });
});

describe('seedDemo', () => {
  it('creates the four demo accounts, the project and a history; a second run adds nothing', async () => {
    const first = await seedDemo(t.ctx);
    expect(first.runsAdded).toBeGreaterThan(20);
    expect(first.ciToken).toMatch(/^pleat_ci_/);
    const second = await seedDemo(t.ctx);
    expect(second).toEqual({ runsAdded: 0, ciToken: null });
    expect(await t.ctx.db.models.User.count()).toBe(4);
    expect(await t.ctx.db.models.Run.count()).toBe(first.runsAdded);
    for (const a of DEMO_ACCOUNTS) {
      const res = await t.http().post('/api/auth/login').send({ email: a.email, password: DEMO_PASSWORD });
      expect(res.status, a.email).toBe(200);
    }
  });

  it('tells the promised story on the branch page and the run page', async () => {
    const viewer = (await t.ctx.db.models.User.findOne({ where: { email: 'viewer@example.com' } }))!;
    const get = (path: string) => t.http().get(path).set('Cookie', cookieFor(t.ctx, viewer));
    const branches = (await get(`/api/projects/${DEMO_PROJECT.slug}/branches`)).body.branches as { name: string; latest: { id: number; verdict: string } }[];
    const byName = Object.fromEntries(branches.map((b) => [b.name, b]));
    expect(Object.keys(byName).sort()).toEqual(['feature/ddc-reorder', 'feature/equaliser-n6', 'feature/flowmeter-envelope', 'main']);
    expect(byName.main!.latest.verdict).toBe('pass');
    expect(byName['feature/flowmeter-envelope']!.latest.verdict).toBe('fail');
    const regressing = (await get(`/api/runs/${byName['feature/equaliser-n6']!.latest.id}`)).body;
    expect(regressing.comparison.basis).toBe('merge-base');
    const eq = regressing.comparison.designs.find((d: { name: string }) => d.name === 'cabin-eq-peak');
    expect(eq.regressions).toContain('utilization');
    expect(eq.utilization.current).toBeLessThan(eq.utilization.base);

    // The hardware trend: main's history carries summaries, and the channelizer tightened from
    // N = 6 to 4 shows it on the folded side's factor.
    const history = (await get(`/api/projects/${DEMO_PROJECT.slug}/branches/main/runs?limit=100`)).body.runs as { designs: { name: string; hardware: { folded: { factor: number; cells: number }; parallel: { factor: number } } | null }[] }[];
    const ddc = history.map((r) => r.designs.find((d) => d.name === 'ddc-tap-bank')?.hardware).filter((h) => h != null);
    expect(ddc.length).toBe(history.length);
    expect(new Set(ddc.map((h) => h.folded.factor))).toEqual(new Set([6, 5, 4]));
    expect(ddc.every((h) => h.parallel.factor === 1)).toBe(true);
    // Every stored summary is one the upload schema accepts.
    const [stored] = await t.ctx.db.sequelize.query('SELECT summary FROM run_design_hardware');
    expect(stored.length).toBeGreaterThan(0);
    for (const row of stored as { summary: unknown }[]) expect(hardwareSummaryProblem(row.summary)).toBeNull();
  });
});
