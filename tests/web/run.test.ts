// The run page in headless Chromium: which design it opens, its downloads, violations that point
// at their line, and the comparison with the base run. The runs are reports of the real engine
// over the example designs, uploaded through the server's own ingest.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildReport } from '../../shared/report/report';
import type { DesignReport, Report } from '../../shared/types';
import { checkDesignText } from '../../server/engine';
import { ingestRun } from '../../server/resources/runs/ingest';
import { deleteConnection, saveConnection } from '../../server/resources/hosts/store';
import type { Project } from '../../server/db/models';
import { axeViolations, ensureChromium, ensureWebBuild, openBrowser, screenshot, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;
let s: Session;
let project: Project;
const temps: string[] = [];
const LONG = 300_000;

const text = (f: string) => readFileSync(join(ROOT, 'examples', f), 'utf8');
function entry(file: string, source: string): DesignReport {
  return { ...checkDesignText(source, `hw/${file}`, { min_utilization: 0.6 }).design, source } as DesignReport;
}
const report = (branch: string, commit: string, designs: DesignReport[], base?: { branch: string; commit: string }): Report =>
  buildReport({ version: 'test', git: { branch, commit, baseBranch: base?.branch ?? null, baseCommit: base?.commit ?? null, message: 'Fold the equaliser looser', author: 'Rhea Router' }, rules: {}, designs });

// The envelope fails in both runs (its loops allow no retiming at N = 2): failing, but not what changed.
// The equaliser is folded looser on the branch (N = 5 -> 8): its utilization falls, a regression.
const ENVELOPE = 'envelope-unretimable.fold.yaml';
const EQUALISER = 'equaliser-retimed.fold.yaml';
const BASE_COMMIT = 'a'.repeat(40);
const HEAD_COMMIT = 'b'.repeat(40);
let runId = 0;

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  project = (await web.ctx.db.models.Project.findOne({ where: { slug: demoProject.slug } }))!;
  const envelope = entry(ENVELOPE, text(ENVELOPE));
  const looser = text(EQUALISER).replace(/^(\s+factor:\s*)\d+/m, '$18');
  await ingestRun(web.ctx, project, report('main', BASE_COMMIT, [envelope, entry(EQUALISER, text(EQUALISER))]), { createdAt: new Date(Date.now() + 1000) });
  runId = (await ingestRun(web.ctx, project, report('feature/looser-eq', HEAD_COMMIT, [envelope, entry(EQUALISER, looser)], { branch: 'main', commit: BASE_COMMIT }), { createdAt: new Date(Date.now() + 2000) })).id;
  s = await openBrowser();
  const a = demoAccount('engineer');
  await signIn(s.page, web.url, a.email, a.password);
}, 600_000);

afterAll(async () => {
  for (const d of temps) rmSync(d, { recursive: true, force: true });
  await s?.close();
  await web?.close();
});

describe('the run page', () => {
  it('opens the design that regressed against the base, not the first failing one', async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${runId}`);
    const design = page.getByTestId('design-report');
    await design.waitFor();
    // The first design of the run fails too, but the equaliser is what this commit made worse.
    expect(await page.getByRole('navigation', { name: 'Designs of this run' }).getByRole('button').first().textContent()).toContain('envelope');
    const equaliserName = checkDesignText(text(EQUALISER), EQUALISER, null).design.name!;
    expect(await design.getByRole('heading', { level: 2 }).first().textContent()).toBe(equaliserName);
    expect(s.errors).toEqual([]);
  }, LONG);

  it('tells what moved in the plan of the regressed design, in the terms of folding, and what the gate counts', async () => {
    const { page } = s;
    // The expected figures come from the engine's own reports of the two design texts.
    const before = checkDesignText(text(EQUALISER), EQUALISER, null).design;
    const after = checkDesignText(text(EQUALISER).replace(/^(\s+factor:\s*)\d+/m, '$18'), EQUALISER, null).design;
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${runId}`);
    const panel = page.getByTestId('comparison').first();
    const card = panel.locator(`li[data-design="${before.name}"]`);
    await card.waitFor();
    expect(await card.getAttribute('data-regressed')).toBe('true');
    expect(await card.locator('[data-figure="N"]').textContent()).toBe(`N${before.factor}›${after.factor}`);
    expect(await card.locator('[data-change="factor"]').textContent()).toContain(`folded looser: N goes from ${before.factor} to ${after.factor}`);
    // Utilization fell past the project's 5 % (the demo project's tolerance), so the gate counts it.
    const util = card.locator('[data-change="utilization"]');
    expect(await util.getAttribute('data-judged')).toBe('true');
    expect(await util.textContent()).toContain("more than the project's allowance of 5%");
    const dr = after.registers!.minimum - before.registers!.minimum;
    if (dr !== 0) expect(await card.locator('[data-change="registers"]').textContent()).toContain(`${Math.abs(dr)}`);
    // The envelope fails in both runs and its plan did not move: it is listed as unchanged, not as a card.
    const envelopeName = checkDesignText(text(ENVELOPE), ENVELOPE, null).design.name!;
    expect(await panel.locator(`li[data-design="${envelopeName}"]`).count()).toBe(0);
    expect(await panel.getByTestId('comparison-same').textContent()).toContain(envelopeName);
    // No table of design rows: the change is told per design.
    expect(await panel.locator('table').count()).toBe(0);
    await page.getByRole('heading', { name: `Changes against main` }).scrollIntoViewIfNeeded();
    await screenshot(page, 'run-changes', false);
    expect(await axeViolations(page)).toEqual([]);
    // At phone width the entry wraps inside the page: the document does not scroll sideways.
    await page.setViewportSize({ width: 390, height: 844 });
    await card.scrollIntoViewIfNeeded();
    await screenshot(page, 'run-changes', false);
    expect(await page.evaluate(() => document.documentElement.scrollWidth <= window.innerWidth)).toBe(true);
    await page.setViewportSize({ width: 1366, height: 768 });
    expect(s.errors).toEqual([]);
  }, LONG);

  it('downloads the report, the edges and the schedule as CSV, and the RTL as a zip of Verilog files', async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${runId}?design=${encodeURIComponent(checkDesignText(text(EQUALISER), EQUALISER, null).design.name!)}`);
    await page.getByTestId('design-files').waitFor();
    await screenshot(page, 'run-regressed-top', false);
    const detail = await page.evaluate(async (id) => (await fetch(`/api/runs/${id}`)).json(), runId);
    const shown = (detail.report as Report).designs[1]!;
    const dir = mkdtempSync(join(tmpdir(), 'pleat-web-dl-'));
    temps.push(dir);
    const save = async (locator: ReturnType<typeof page.locator>, name: string) => {
      const [download] = await Promise.all([page.waitForEvent('download'), locator.click()]);
      const file = join(dir, name);
      await download.saveAs(file);
      return { file, suggested: download.suggestedFilename() };
    };
    const json = await save(page.locator('[data-download="report.json"]'), 'report.json');
    expect(JSON.parse(readFileSync(json.file, 'utf8'))).toEqual(detail.report);
    const edges = await save(page.locator('[data-download="edges.csv"]'), 'edges.csv');
    expect(edges.suggested).toMatch(/-edges\.csv$/);
    // csv-parse (RFC 4180) reads back one record per edge of the stored report.
    const rows = parse(readFileSync(edges.file, 'utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.map((r) => `${r.from}->${r.to}:${r.folded_delay}`)).toEqual(shown.edges!.map((e) => `${e.from}->${e.to}:${e.foldedDelay ?? ''}`));
    const schedule = await save(page.locator('[data-download="schedule.csv"]'), 'schedule.csv');
    expect((parse(readFileSync(schedule.file, 'utf8'), { columns: true }) as unknown[]).length).toBe(shown.factor! * shown.schedule!.length);
    const zip = await save(page.locator('[data-download="rtl.zip"]'), 'rtl.zip');
    // Info-ZIP's unzip tests every entry and lists the Verilog of the folded datapath.
    execFileSync('unzip', ['-tq', zip.file]);
    const listing = execFileSync('unzip', ['-Z1', zip.file], { encoding: 'utf8' }).split('\n').filter(Boolean);
    expect(listing.filter((f) => f.endsWith('.v')).length).toBeGreaterThan(1);
    expect(listing.some((f) => f.endsWith('.rtl.json'))).toBe(true);
    expect(s.errors).toEqual([]);
  }, LONG);

  it('says why a plan without a feasible datapath has no RTL, and points its broken rules at their line', async () => {
    const { page } = s;
    const detail = await page.evaluate(async (id) => (await fetch(`/api/runs/${id}`)).json(), runId);
    const envelope = (detail.report as Report).designs[0]!;
    const placed = envelope.violations.find((v) => v.line != null);
    expect(placed, 'the pipeline placed a violation of the envelope at a line').toBeTruthy();
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${runId}?design=${encodeURIComponent(envelope.name!)}`);
    await page.locator('[data-no-rtl]').getByText(/no feasible folded datapath/).waitFor();
    expect(await page.locator('[data-download="rtl.zip"]').count()).toBe(0);
    const where = `hw/${ENVELOPE}:${placed!.line}${placed!.column != null ? `:${placed!.column}` : ''}`;
    await page.getByRole('button', { name: `Show ${where} in the file` }).first().click();
    await page.locator(`[data-testid=source-view] [data-line="${placed!.line}"][data-focused]`).waitFor();
    expect(await axeViolations(page)).toEqual([]);
    expect(s.errors).toEqual([]);
  }, LONG);

  it('links a broken rule to its line on the git host at the run\'s commit when the project is connected', async () => {
    const { page } = s;
    const lead = (await web.ctx.db.models.User.findOne({ where: { email: demoAccount('lead').email } }))!;
    // Only the address matters here; the sealed token is never opened by the run page.
    await saveConnection(web.ctx, { projectId: project.id, kind: 'github', apiUrl: 'https://api.github.com', repository: 'acme/front-end', sealed: 'not-opened', last4: 'abcd', userId: lead.id });
    try {
      const detail = await page.evaluate(async (id) => (await fetch(`/api/runs/${id}`)).json(), runId);
      const placed = (detail.report as Report).designs[0]!.violations.find((v) => v.line != null)!;
      await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${runId}?design=${encodeURIComponent((detail.report as Report).designs[0]!.name!)}`);
      const link = page.locator('[data-host-link]').first();
      await link.waitFor();
      // GitHub's file view at a commit, with the line as its fragment (the host's URL scheme; common practice, no source).
      expect(await link.getAttribute('href')).toBe(`https://github.com/acme/front-end/blob/${HEAD_COMMIT}/hw/${ENVELOPE}#L${placed.line}`);
    } finally {
      await deleteConnection(web.ctx, project.id);
    }
  }, LONG);
});
