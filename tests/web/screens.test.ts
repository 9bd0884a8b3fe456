// The look of the main pages: the font ships with the app and is used, and every main page is
// saved as a screenshot at a laptop size and a wide-monitor size (test-artifacts/screenshots/)
// for a person to look at. Pages must render without errors in the browser's console.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditPage, ensureChromium, ensureWebBuild, openBrowser, screenshot as save, signIn, type Session } from './browser';
import type { Page } from 'playwright-core';
import { demoAccount, demoProject, type DemoRole } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;

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
  });
});

/** Every page that is saved is also audited for keyboard and screen-reader basics. */
async function screenshot(page: Page, name: string, fullPage = true) {
  await save(page, name, fullPage);
  expect(await auditPage(page), `${name}: accessibility audit`).toEqual([]);
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
  });

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
  });

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
  });

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
  });

  it('rules as a viewer (read only)', async () => {
    const { page } = await as('viewer');
    await page.goto(`${web.url}/projects/${slug}/rules`);
    await page.getByTestId('rules-readonly').waitFor();
    await screenshot(page, 'rules-viewer');
  });

  it('try a design (engineer)', async () => {
    const { page } = await as('engineer');
    await page.goto(`${web.url}/try?project=${slug}`);
    await page.getByTestId('drop-zone').waitFor();
    await screenshot(page, 'try-empty');
    await page.locator('input[type=file]').setInputFiles(join(ROOT, 'examples', 'envelope-unretimable.fold.yaml'));
    await page.getByTestId('design-report').waitFor();
    await screenshot(page, 'try-design');
  });
});
