// The branch history in headless Chromium, on the seeded demo: the rule floor and the base branch
// on the utilization chart, registers per design, the commit's message and author of each run,
// a trend point that opens its run, the page of the history in the address, and the hardware
// summaries uploaded with the runs (trend on the branch, table on the run page).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RunPage } from '../../shared/report/api';
import type { Report } from '../../shared/types';
import { axeViolations, ensureChromium, ensureWebBuild, openBrowser, screenshot, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { startWebServer, type WebServer } from './server';
import { ingestRun } from '../../server/resources/runs/ingest';
import { storeHardware } from '../../server/resources/runs/hardware';
import { designEntry, makeReport, randomCommit } from '../../server/test/factories';
import type { HardwareSummary } from '../../shared/report/hardwareSummary';

let web: WebServer;
let s: Session;
const LONG = 300_000;
const slug = demoProject.slug;
const BRANCH = 'feature/equaliser-n6';

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  s = await openBrowser();
  const a = demoAccount('viewer');
  await signIn(s.page, web.url, a.email, a.password);
}, 600_000);

afterAll(async () => {
  await s?.close();
  await web?.close();
});

const api = <T,>(path: string) => s.page.evaluate(async (p) => (await fetch(p)).json(), path) as Promise<T>;

describe('a branch history', () => {
  it('shows the area and timing trend of the folded design from the uploaded hardware summaries', async () => {
    // Two runs with made-up summaries of pleat rtl --area, stored as an upload stores them.
    const project = (await web.ctx.db.models.Project.findOne({ where: { slug } }))!;
    const branch = 'feature/area-trend';
    const at = Date.now() - 3_600_000;
    let lastRun = 0;
    for (const [i, [cells, ff, depth]] of [[900, 40, 31], [850, 38, 29]].entries()) {
      const hardware: HardwareSummary = {
        format: 'pleat-hardware', version: 1, design: 'notch', file: 'hw/notch.fold.yaml', top: 'notch', tool: 'Yosys 0.23',
        compared: { stages: 'folded', multipliers: 'general', width: 16, coefFrac: 14 },
        folded: { cells: cells!, flipFlops: ff!, depth: depth!, factor: 4 }, parallel: { cells: 3000, flipFlops: 90, depth: 20, factor: 1 },
      };
      const report = makeReport({ branch, commit: randomCommit(), designs: [{ ...designEntry('notch'), hardware }] });
      const stored = await ingestRun(web.ctx, project, report, { createdAt: new Date(at + i * 60_000) });
      await storeHardware(web.ctx, stored.id, report);
      lastRun = stored.id;
    }
    const { page } = s;
    await page.goto(`${web.url}/projects/${slug}/branches/${encodeURIComponent(branch)}`);
    const trends = page.getByTestId('hardware-trends');
    await trends.locator('.recharts-surface').first().waitFor();
    expect(await page.getByTestId('hardware-cells').textContent()).toBe('notch 900 → 850');
    expect(await page.getByTestId('hardware-flipFlops').textContent()).toBe('notch 40 → 38');
    expect(await page.getByTestId('hardware-depth').textContent()).toBe('notch 31 → 29');
    expect(await trends.locator('path.recharts-curve').count()).toBe(3);
    expect(await axeViolations(page)).toEqual([]);
    // The run page shows the summary of the design beside its parallel reference.
    await page.goto(`${web.url}/projects/${slug}/runs/${lastRun}?design=notch`);
    const card = page.getByTestId('hardware-card');
    await card.waitFor();
    expect(await page.getByTestId('hardware-folded-cells').textContent()).toBe('850');
    expect(await card.locator('tbody tr').first().locator('td').allTextContents()).toEqual(['850', '3,000', '0.28x']);
    expect(await page.locator('#run-hardware').textContent()).toContain('figures by Yosys 0.23');
    // A passing design whose report has registers but no table: not "cannot exist as planned".
    expect(await page.getByTestId('allocation-missing').textContent()).toBe('This report carries no allocation table (it was made by a Pleat version that did not write one).');
    await screenshot(page, 'run-hardware');
    expect(await axeViolations(page)).toEqual([]);
    expect(s.errors).toEqual([]);
  }, LONG);

  it('draws the rule floor and the base branch on the utilization chart, and registers per design', async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${slug}/branches/${BRANCH}`);
    const charts = page.getByTestId('history-charts');
    await charts.locator('.recharts-surface').first().waitFor();
    const runs = (await api<RunPage>(`/api/projects/${slug}/branches/${encodeURIComponent(BRANCH)}/runs?limit=100`)).runs;
    // The floor is min_utilization of the rules each stored report was checked under.
    const latest = await api<{ report: Report }>(`/api/runs/${runs[0]!.id}`);
    const floor = latest.report.rules.min_utilization!.value;
    expect(runs[0]!.utilizationFloor).toBe(floor);
    const utilization = charts.locator('figure').first();
    expect(await utilization.getAttribute('aria-label')).toContain(`floor ${Math.round(floor * 100)}%`);
    await utilization.getByText('rule floor (min_utilization)').waitFor();
    // Drawn: the dashed floor and the grey base-branch line (recharts puts each Line in its own path).
    expect(await utilization.locator('path.recharts-curve[stroke-dasharray="5 3"]').count()).toBe(1);
    expect(await utilization.locator('path.recharts-curve[stroke="#9aa0bf"]').count()).toBe(1);
    await utilization.getByText('main', { exact: true }).waitFor();
    // One line per design of the latest run, named in the legend.
    const registers = charts.locator('figure').nth(1);
    const names = runs[0]!.designs.filter((d) => d.registerMinimum !== null).map((d) => d.name);
    for (const n of names) await registers.getByText(n, { exact: true }).waitFor();
    expect(await registers.locator('path.recharts-curve').count()).toBe(names.length);
    await screenshot(page, 'branch-history-overlay', false);
    expect(await axeViolations(page)).toEqual([]);
    expect(s.errors).toEqual([]);
  }, LONG);

  it("shows each run's commit message and author, and a trend point opens its run", async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${slug}/branches/${BRANCH}`);
    const rows = page.getByTestId('runs-table').locator('tbody tr');
    await rows.first().waitFor();
    const runs = (await api<RunPage>(`/api/projects/${slug}/branches/${encodeURIComponent(BRANCH)}/runs?limit=15`)).runs;
    expect(runs[0]!.message && runs[0]!.author, 'the demo sends message and author').toBeTruthy();
    for (const [i, r] of runs.entries()) expect(await rows.nth(i).locator('[data-commit-meta]').textContent()).toBe(`${r.message} · ${r.author}`);
    // The oldest run's dot on the utilization chart, clicked as a person would.
    const oldest = runs[runs.length - 1]!;
    await page.getByTestId('history-charts').locator('figure').first().locator(`g[data-run="${oldest.id}"]`).click({ force: true });
    await page.waitForURL(`**/projects/${slug}/runs/${oldest.id}`);
    await page.getByTestId('design-report').waitFor();
    expect(s.errors).toEqual([]);
  }, LONG);

  it('keeps the page of the history in the address (?page=), so a reload or a link shows the same runs', async () => {
    const { page } = s;
    const all = (await api<RunPage>(`/api/projects/${slug}/branches/main/runs?limit=200`)).runs;
    expect(all.length).toBeGreaterThan(15);
    await page.goto(`${web.url}/projects/${slug}/branches/main`);
    const rows = page.getByTestId('runs-table').locator('tbody tr');
    await rows.first().waitFor();
    await page.getByRole('button', { name: 'Older →' }).click();
    await page.waitForURL(/\?page=2$/);
    const page2 = all.slice(15, 30).map((r) => r.commit);
    await page.waitForFunction((c) => document.querySelector('[data-testid=runs-table] tbody tr')?.getAttribute('data-commit') === c, page2[0]);
    expect(await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-commit')))).toEqual(page2);
    await page.reload();
    await page.getByText('Page 2', { exact: true }).waitFor();
    await page.waitForFunction((c) => document.querySelector('[data-testid=runs-table] tbody tr')?.getAttribute('data-commit') === c, page2[0]);
    expect(await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-commit')))).toEqual(page2);
    // The browser's back button returns to the first page.
    await page.goBack();
    await page.waitForFunction((c) => document.querySelector('[data-testid=runs-table] tbody tr')?.getAttribute('data-commit') === c, all[0]!.commit);
    expect(s.errors).toEqual([]);
  }, LONG);
});
