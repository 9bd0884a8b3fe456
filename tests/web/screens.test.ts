// The look of the main pages: the font ships with the app and is used, and every main page is
// saved as a screenshot at a laptop size and a wide-monitor size (test-artifacts/screenshots/)
// for a person to look at, and checked by axe-core. Pages must render without errors in the browser's console.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { axeViolations, ensureChromium, ensureWebBuild, openBrowser, screenshot as save, signIn, type Session } from './browser';
import type { Page } from 'playwright-core';
import { demoAccount, demoProject, type DemoRole } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';
import type { Report, SignalSource } from '../../shared/types';

let web: WebServer;
/** A test visits several pages and runs axe-core on each: slow on a busy two-core machine. */
const LONG = 300_000;


beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
}, 600_000); // the first run may install Chromium with apt-get

afterAll(async () => {
  await web?.close();
});

describe('the font', () => {
  it('is Space Grotesk, served from the app itself and loaded by the page', async () => {
    const s = await openBrowser();
    try {
      const fonts: string[] = [];
      s.page.on('response', (r) => {
        if (/\.woff2(\?|$)/.test(r.url()) && r.ok()) fonts.push(r.url());
      });
      await s.page.goto(`${web.url}/signin`);
      await s.page.getByRole('heading', { name: 'Sign in to Pleat' }).waitFor();
      const state = await s.page.evaluate(async () => {
        await document.fonts.ready;
        const faces = [...document.fonts].filter((f) => f.family.replace(/["']/g, '') === 'Space Grotesk');
        const heading = document.querySelector('h1')!;
        return {
          loaded: faces.filter((f) => f.status === 'loaded').map((f) => f.weight),
          family: getComputedStyle(heading).fontFamily,
        };
      });
      expect(state.family.split(',')[0].replace(/["']/g, '').trim()).toBe('Space Grotesk');
      expect(state.loaded.length).toBeGreaterThan(0);
      expect(fonts.length).toBeGreaterThan(0);
      // Same origin as the app: no font service is involved.
      for (const url of fonts) expect(new URL(url).origin).toBe(web.url);
      expect(s.errors).toEqual([]);
    } finally {
      await s.close();
    }
  }, LONG);
});

/** Every page that is saved is also checked by axe-core: no serious or critical violation. */
async function screenshot(page: Page, name: string, fullPage = true) {
  await save(page, name, fullPage);
  expect(await axeViolations(page), `${name}: axe-core, serious and critical`).toEqual([]);
}

const SIZES = [
  { width: 1366, height: 768 },
  { width: 1920, height: 1080 },
];

describe.each(SIZES)('screenshots at $width x $height', (size) => {
  // One browser per size; switching roles is a sign-out and a sign-in, as a person would do it.
  let s: Session;
  let current: DemoRole | null = null;
  const as = async (role: DemoRole) => {
    s ??= await openBrowser(size);
    if (current !== role) {
      const a = demoAccount(role);
      await signIn(s.page, web.url, a.email, a.password);
      current = role;
    }
    return s;
  };
  const slug = demoProject.slug;

  afterAll(async () => {
    expect(s?.errors ?? []).toEqual([]);
    await s?.close();
  });

  it('sign-in', async () => {
    s ??= await openBrowser(size);
    await s.page.goto(`${web.url}/signin`);
    await s.page.getByRole('heading', { name: 'Sign in to Pleat' }).waitFor();
    await s.page.evaluate(() => document.fonts.ready);
    await screenshot(s.page, 'signin');
  }, LONG);

  it('projects, branches and a branch history (lead)', async () => {
    const { page } = await as('lead');
    await page.goto(`${web.url}/`);
    await page.locator(`[data-project="${slug}"]`).getByText(/Pass|Fail|Invalid/).waitFor();
    await screenshot(page, 'projects');
    await page.goto(`${web.url}/projects/${slug}`);
    await page.locator('tr[data-branch]').first().waitFor();
    await screenshot(page, 'branches');
    await page.goto(`${web.url}/projects/${slug}/branches/main`);
    await page.getByTestId('runs-table').waitFor();
    await page.locator('.recharts-surface').first().waitFor();
    await screenshot(page, 'branch-history');
  }, LONG);

  it('a failing run and a passing run with the full report (lead)', async () => {
    const { page } = await as('lead');
    const branches = await page.evaluate(async (slug) => (await fetch(`/api/projects/${slug}/branches`)).json(), slug);
    const failing = branches.branches.find((b: { latest: { verdict: string } | null }) => b.latest?.verdict === 'fail');
    const passing = branches.branches.find((b: { latest: { verdict: string } | null }) => b.latest?.verdict === 'pass');
    expect(failing, 'the demo has a failing branch').toBeTruthy();
    expect(passing, 'the demo has a passing branch').toBeTruthy();
    for (const [name, b] of [['run-failing', failing], ['run-passing', passing]] as const) {
      await page.goto(`${web.url}/projects/${slug}/runs/${b.latest.id}`);
      await page.getByTestId('design-report').waitFor();
      await page.getByTestId('comparison').first().waitFor();
      await screenshot(page, name);
      await screenshot(page, `${name}-top`, false);
    }
  }, LONG);

  /** How the tables name a source, as `pleat simulate --tables` prints them: unit id, input id, R<k>, 0. */
  const label = (s: SignalSource) => (s.kind === 'unit' ? s.unit : s.kind === 'input' ? s.node : s.kind === 'register' ? `R${s.register}` : '0');

  it('the control tables of a run, as the stored report has them (lead)', async () => {
    const { page } = await as('lead');
    // The expected values are read from the run's own report, as the server stores it.
    const branches = await page.evaluate(async (slug) => (await fetch(`/api/projects/${slug}/branches`)).json(), slug);
    const main = branches.branches.find((b: { name: string }) => b.name === 'main');
    const run = await page.evaluate(async (id) => (await fetch(`/api/runs/${id}`)).json(), main.latest.id);
    const design = (run.report as Report).designs.find((d) => d.control && d.control.muxes.some((m) => m.sources.length > 1));
    expect(design, 'a design of the run has a multiplexer with more than one input').toBeTruthy();
    const control = design!.control!;
    await page.goto(`${web.url}/projects/${slug}/runs/${main.latest.id}?design=${encodeURIComponent(design!.name ?? design!.file)}`);
    const section = page.locator('section#control');
    await section.getByTestId('mux-table').waitFor();
    const muxTable = section.getByTestId('mux-table');
    for (const m of control.muxes) {
      const row = muxTable.getByRole('row').filter({ has: page.getByRole('rowheader', { name: `${m.unit}.a${m.port}`, exact: true }) });
      expect(await row.locator('[data-mux-inputs]').textContent()).toBe(String(m.sources.length));
      // One cell per partition after the row header: the selected source's label, or "not read".
      const cells = row.getByRole('cell');
      for (let t = 0; t < control.factor; t++) {
        const sel = m.select[t];
        if (sel === null) expect(await cells.nth(t).textContent()).toBe('not read');
        else expect(await cells.nth(t).locator('[data-source]').textContent()).toBe(label(m.sources[sel]));
      }
    }
    const loads = section.getByTestId('register-load-table');
    expect(await loads.locator('table').getAttribute('aria-rowcount')).toBe(String(control.registers + 1));
    const r0 = control.registerTables[0];
    const r0cells = loads.getByRole('row').filter({ has: page.getByRole('rowheader', { name: `R${r0.register}`, exact: true }) }).getByRole('cell');
    for (let t = 0; t < control.factor; t++) {
      const load = r0.loads[t];
      const text = await r0cells.nth(t).textContent();
      if (load) expect(text).toBe(`${load.variable}from ${label(load.source)}`);
      else expect(text).toContain('holds');
    }
    for (const o of control.outputs) await section.locator(`tr[data-output="${o.node}"]`).waitFor();
    // Reached by the design's own section links, as a person would.
    await page.getByRole('navigation', { name: 'Sections of this design' }).getByRole('link', { name: 'Control', exact: true }).click();
    await page.waitForURL(/#control$/);
    await screenshot(page, 'run-control', false);
  }, LONG);

  it('rules, CI tokens and members (lead), users (admin)', async () => {
    const lead = await as('lead');
    await lead.page.goto(`${web.url}/projects/${slug}/rules`);
    await lead.page.getByTestId('rule-history').waitFor();
    await screenshot(lead.page, 'rules');
    await lead.page.goto(`${web.url}/projects/${slug}/tokens`);
    await lead.page.getByLabel('Name').fill(`screenshot pipeline ${size.width}`);
    await lead.page.getByRole('button', { name: 'Create token' }).click();
    await lead.page.getByTestId('token-secret').waitFor();
    await screenshot(lead.page, 'tokens');
    await lead.page.goto(`${web.url}/projects/${slug}/members`);
    await lead.page.locator('tr[data-member]').first().waitFor();
    await screenshot(lead.page, 'members');
    const admin = await as('admin');
    await admin.page.goto(`${web.url}/admin/users`);
    await admin.page.locator('tr[data-user]').first().waitFor();
    await screenshot(admin.page, 'users');
  }, LONG);

  it('rules as a viewer (read only)', async () => {
    const { page } = await as('viewer');
    await page.goto(`${web.url}/projects/${slug}/rules`);
    await page.getByTestId('rules-readonly').waitFor();
    await screenshot(page, 'rules-viewer');
  }, LONG);

  it('try a design (engineer)', async () => {
    const { page } = await as('engineer');
    await page.goto(`${web.url}/try?project=${slug}`);
    await page.getByTestId('drop-zone').waitFor();
    await screenshot(page, 'try-empty');
    await page.locator('input[type=file]').setInputFiles(join(ROOT, 'examples', 'envelope-unretimable.fold.yaml'));
    await page.getByTestId('design-report').waitFor();
    await screenshot(page, 'try-design');
  }, LONG);
});
