// Try a design: an engineer drops a file in the browser and sees the analysis the engine gives
// for it, rendered by the same components as a stored run, with the findings on their lines.
// Expected values come from running the engine (shared/) on the same file in the test.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../../shared/analysis/analyze';
import { loadDesign } from '../../shared/design/load';
import { ensureChromium, ensureWebBuild, openBrowser, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;
let s: Session;
const dir = mkdtempSync(join(tmpdir(), 'pleat-try-'));

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  s = await openBrowser();
  const a = demoAccount('engineer');
  await signIn(s.page, web.url, a.email, a.password);
}, 600_000); // the first run may install Chromium with apt-get

afterAll(async () => {
  await s?.close();
  await web?.close();
});

async function tryFile(path: string) {
  const { page } = s;
  await page.goto(`${web.url}/try?project=${demoProject.slug}`);
  await page.locator('input[type=file]').setInputFiles(path);
  await page.getByTestId('try-result').waitFor();
}

describe('try a design', () => {
  it('shows the analysis of a valid design file, as the engine computes it', async () => {
    const file = join(ROOT, 'examples', 'sensor-frontend.fold.yaml');
    const loaded = loadDesign(readFileSync(file, 'utf8'));
    expect(loaded.design).not.toBeNull();
    const a = analyze(loaded.design!);
    await tryFile(file);
    const report = s.page.getByTestId('design-report');
    await report.getByRole('heading', { name: loaded.design!.name }).waitFor();
    expect(await report.getByText(`${a.edges.length} edges`, { exact: true }).count()).toBe(1);
    const bound = await report.getByTestId('iteration-bound').textContent();
    expect(a.iterationBound).not.toBeNull();
    expect(bound).toContain(String(a.iterationBound!.numerator));
    // Schedule: one row per unit, each node of a folding set in its partition's cell.
    for (const row of a.schedule) {
      const cells = report.getByRole('row').filter({ has: s.page.getByRole('rowheader', { name: new RegExp(`^${row.unit}`) }) });
      for (const node of row.slots.filter((x): x is string => x !== null)) {
        expect(await cells.getByText(node, { exact: true }).count()).toBeGreaterThan(0);
      }
    }
    expect(s.errors).toEqual([]);
  });

  it('points the findings of an invalid file at their lines', async () => {
    // An invented, broken section: an edge to a node that does not exist, a node in two places.
    const text = [
      'format: pleat/1',
      'name: broken-biquad',
      'units:',
      '  - { id: ADD1, kind: add, stages: 1 }',
      '  - { id: MUL1, kind: mul, stages: 2 }',
      'nodes:',
      '  - { id: x,  kind: input }',
      '  - { id: s1, kind: add }',
      '  - { id: g1, kind: mul, coefficient: 0.5 }',
      '  - { id: y,  kind: output }',
      'edges:',
      '  - { from: x,  to: s1 }',
      '  - { from: s1, to: g9 }',
      '  - { from: g1, to: s1, delays: 1 }',
      '  - { from: s1, to: y }',
      'folding:',
      '  factor: 2',
      '  sets:',
      '    ADD1: [s1, s1]',
      '    MUL1: [g1]',
      '',
    ].join('\n');
    const path = join(dir, 'broken.fold.yaml');
    writeFileSync(path, text);
    const expected = loadDesign(text).diagnostics;
    expect(expected.length).toBeGreaterThan(0);
    await tryFile(path);
    const { page } = s;
    await page.getByText('Invalid', { exact: true }).first().waitFor();
    const list = page.getByRole('list', { name: 'Findings in the design file' });
    for (const d of expected) {
      expect(await list.locator(`li[data-code="${d.code}"]`).count()).toBeGreaterThan(0);
      if (d.line !== null) expect(await page.locator(`[data-testid=source-view] [data-line="${d.line}"][data-marked]`).count()).toBe(1);
    }
    const last = expected.filter((d) => d.line !== null).at(-1)!;
    await list.getByRole('button', { name: `Show broken.fold.yaml:${last.line}:${last.column} in the file` }).click();
    await page.locator(`[data-testid=source-view] [data-line="${last.line}"][data-focused]`).waitFor();
  });

  it('keeps a design of thousands of edges responsive: the edge table draws only the rows in view', async () => {
    // The project's generator of large designs (a plain ESM script, loaded by path).
    const gen = join(ROOT, 'scripts', 'gen-design.mjs');
    const { generateDesign } = (await import(gen)) as {
      generateDesign(o: { edges: number; seed: number; name: string }): { text: string; edges: number };
    };
    const g = generateDesign({ edges: 4000, seed: 11, name: 'bulk-channel-bank' });
    const path = join(dir, 'bulk.fold.yaml');
    writeFileSync(path, g.text);
    await tryFile(path);
    const { page } = s;
    const table = page.getByTestId('edge-table-scroll');
    await page.getByText(`${g.edges.toLocaleString('en-US')} edges`, { exact: true }).waitFor();
    const drawn = await table.locator('tbody tr[aria-rowindex]').count();
    expect(drawn).toBeGreaterThan(5);
    expect(drawn).toBeLessThan(100);
    // Scrolling to the end brings the last edge into the DOM.
    await table.evaluate((el) => el.scrollTo(0, el.scrollHeight));
    await table.locator(`tbody tr[aria-rowindex="${g.edges + 1}"]`).waitFor();
    expect(s.errors).toEqual([]);
  });

  it('shows no retimed delays and no sample rate for a plan that no retiming can fix', async () => {
    const file = join(ROOT, 'examples', 'envelope-unretimable.fold.yaml');
    const loaded = loadDesign(readFileSync(file, 'utf8'));
    const a = analyze(loaded.design!);
    // What the engine reports for it: no feasible retiming, yet "retimed" delays (the design's own) and a sample rate.
    expect(a.retiming.needed && !a.retiming.feasible).toBe(true);
    expect(a.sampleRateMHz).not.toBeNull();
    expect(a.edges.every((e) => e.retimedDelays === e.delays)).toBe(true);
    await tryFile(file);
    const report = s.page.getByTestId('design-report');
    await report.getByTestId('no-retimed-datapath').waitFor();
    const heads = await report.getByTestId('edge-table-scroll').locator('thead th').allTextContents();
    expect(heads.some((h) => /retimed/i.test(h))).toBe(false);
    expect(heads.length).toBe(5);
    const rate = report.locator('dt', { hasText: 'Sample rate' }).locator('xpath=..');
    expect(await rate.textContent()).not.toContain('MHz');
    expect(await rate.textContent()).toContain('no feasible datapath');
    expect(await report.getByTestId('sample-rate').textContent()).not.toContain('MHz');
    // The loop that stops retiming is what the page points at instead.
    await report.getByTestId('retiming-conflict').waitFor();
    expect(s.errors).toEqual([]);
  });

  it('shows the file in a monospace font served by the app, and names a brace left open', async () => {
    const lines = ['format: pleat/1', 'name: open-brace', 'units:', '  - { id: ADD1, kind: add, stages: 1 }', 'nodes:', '  - { id: x, kind: input }', '  - { id: s1, kind: add', '  - { id: y, kind: output }', ''];
    const path = join(dir, 'open-brace.fold.yaml');
    writeFileSync(path, lines.join('\n'));
    await tryFile(path);
    const { page } = s;
    const view = page.getByTestId('source-view');
    await view.locator('[data-line="8"][data-marked]').waitFor();
    // The `{` of line 7, column 5 is never closed; the YAML reader stops on line 8.
    await page.getByRole('list', { name: 'Findings in the design file' }).getByText('the `{` opened at 7:5 is never closed').waitFor();
    const font = await view.locator('[data-line="7"] code').evaluate(async (el) => {
      await document.fonts.ready;
      const family = getComputedStyle(el).fontFamily.split(',')[0]!.replace(/["']/g, '').trim();
      const loaded = [...document.fonts].some((f) => f.family.replace(/["']/g, '') === family && f.status === 'loaded');
      // Every character as wide as every other: the columns of the file line up (what monospace means).
      const probe = (t: string) => {
        const c = document.createElement('canvas').getContext('2d')!;
        c.font = `13px "${family}"`;
        return c.measureText(t).width;
      };
      const fonts = performance.getEntriesByType('resource').map((e) => e.name).filter((u) => /\.woff2(\?|$)/.test(u));
      return { family, loaded, fonts, narrow: probe('iiiiiiiiii'), wide: probe('MMMMMMMMMM') };
    });
    expect(font.family).toBe('JetBrains Mono');
    expect(font.loaded).toBe(true);
    expect(font.narrow).toBeCloseTo(font.wide, 3);
    // Served by the app itself, no font service (the file names are those of @fontsource/jetbrains-mono).
    expect(font.fonts.some((u) => /jetbrains-mono/.test(u) && new URL(u).origin === web.url)).toBe(true);
    expect(s.errors).toEqual([]);
  });
});
