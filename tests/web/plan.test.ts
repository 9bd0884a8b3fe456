// Planning from the browser: an engineer drops a design without folding sets on "Try a design",
// starts a plan, and the job page shows the plan's grid once a real worker process (server/main.ts
// worker, on the same private schema) has run it. The reference for the grid is the design file
// itself, read by js-yaml: every operation node appears in exactly one cell, on a unit of its kind
// (what a folding set is: common practice, no source); and the job's stored result, read from the
// database, is what the page draws.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { load } from 'js-yaml';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { JobResult } from '../../shared/report/api';
import { startWorkerProcess, type WorkerProcess } from '../../server/test/workers';
import { axeViolations, ensureChromium, ensureWebBuild, openBrowser, screenshot, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;
let worker: WorkerProcess;
let s: Session;
const dir = mkdtempSync(join(tmpdir(), 'pleat-plan-'));

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  worker = await startWorkerProcess(web.db);
  s = await openBrowser();
  const a = demoAccount('engineer');
  await signIn(s.page, web.url, a.email, a.password);
}, 600_000);

afterAll(async () => {
  await s?.close();
  await worker?.kill('SIGTERM');
  await web?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('plan a design from try a design', () => {
  it('starts a plan job and shows the planned grid', async () => {
    const example = readFileSync(join(ROOT, 'examples', 'sensor-frontend.fold.yaml'), 'utf8');
    const text = example.replace(/\n {2}sets:\n( {4}.*\n?)+/, '\n');
    const file = join(dir, 'frontend-unplaced.fold.yaml');
    writeFileSync(file, text);
    const doc = load(text) as { nodes: { id: string; kind: string }[]; units: { id: string; kind: string }[] };
    const operations = doc.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output');

    const { page } = s;
    await page.goto(`${web.url}/try?project=${demoProject.slug}`);
    await page.locator('input[type=file]').setInputFiles(file);
    await page.getByTestId('try-result').waitFor();
    await page.getByLabel('Time limit (s)').fill('3');
    await page.getByRole('button', { name: 'Plan this design' }).click();
    await page.waitForURL(/\/projects\/[^/]+\/jobs\/\d+$/);
    const id = Number(/\/jobs\/(\d+)$/.exec(page.url())![1]);
    await page.getByTestId('plan-result').waitFor({ timeout: 90_000 });

    const grid = page.getByTestId('planned-grid');
    const cells = await grid.locator('td span[title]').evaluateAll((els) => els.map((e) => e.getAttribute('title')!));
    // "<node> on <unit> at partition <t>"
    const placed = cells.map((c) => /^(\S+) on (\S+) at partition (\d+)/.exec(c)!).map((m) => ({ node: m[1]!, unit: m[2]!, t: Number(m[3]) }));
    expect(placed.map((p) => p.node).sort()).toEqual(operations.map((o) => o.id).sort());
    const kindOfUnit = new Map(doc.units.map((u) => [u.id, u.kind]));
    for (const p of placed) expect(kindOfUnit.get(p.unit), p.node).toBe(operations.find((o) => o.id === p.node)!.kind);

    const [row] = await web.db.sequelize.query<{ result: JobResult }>('SELECT result FROM jobs WHERE id = $1', { bind: [id], type: QueryTypes.SELECT });
    if (row?.result.kind !== 'plan') throw new Error('no plan stored');
    const stored = Object.entries(row.result.plan.sets).flatMap(([unit, slots]) => slots.flatMap((n, t) => (n ? [{ node: n, unit, t }] : [])));
    expect([...placed].sort((a, b) => a.node.localeCompare(b.node))).toEqual([...stored].sort((a, b) => a.node.localeCompare(b.node)));
    await page.getByRole('button', { name: 'Download the planned design' }).waitFor();
    await screenshot(page, 'job-plan');
    expect(await axeViolations(page)).toEqual([]);
    // The project's list of plans has it, for every member.
    await page.getByRole('navigation', { name: 'Project' }).getByRole('link', { name: 'Plans' }).click();
    await page.getByTestId('job-list').getByRole('link', { name: `Plan #${id}` }).waitFor();
    expect(await axeViolations(page)).toEqual([]);
    expect(s.errors).toEqual([]);
  }, 180_000);

  it('sweeps N from a run of the demo and shows the table with one row per factor', async () => {
    // The demo's runs carry their designs' text (server/seed/seed.ts), so a run's design can be swept.
    const [run] = await web.db.sequelize.query<{ id: number; name: string }>(
      `SELECT r.id, d->>'name' AS name FROM runs r, jsonb_array_elements(r.report->'designs') d WHERE d ? 'source' ORDER BY r.id LIMIT 1`,
      { type: QueryTypes.SELECT },
    );
    const { page } = s;
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/${run!.id}?design=${encodeURIComponent(run!.name)}`);
    const actions = page.getByTestId('plan-actions');
    await actions.getByLabel('N from').fill('2');
    await actions.getByLabel('to').fill('4');
    await actions.getByLabel('Time limit (s)').fill('3');
    await actions.getByRole('button', { name: 'Sweep N' }).click();
    await page.waitForURL(/\/jobs\/\d+$/);
    await page.getByTestId('sweep-result').waitFor({ timeout: 90_000 });
    const rows = page.getByTestId('sweep-result').locator('tbody tr');
    expect(await rows.count()).toBe(3);
    expect(await rows.locator('td:first-child').allTextContents()).toEqual(['2', '3', '4']);
    await screenshot(page, 'job-sweep');
    expect(await axeViolations(page)).toEqual([]);
    expect(s.errors).toEqual([]);
  }, 180_000);
});
