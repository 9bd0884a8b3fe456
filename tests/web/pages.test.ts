// Every page of the web report at a phone width (390 px) and a laptop width: the document never
// scrolls sideways (wide tables scroll inside their own panel), the sign-out control is on the
// screen, and axe-core (the @axe-core/playwright package, WCAG 2.x rules) finds no serious or
// critical violation. Each page is saved as a screenshot for a person to look at.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { axeViolations, ensureChromium, ensureWebBuild, openBrowser, screenshot, signIn, type Session } from './browser';
import { demoAccount, demoProject, type DemoRole } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
}, 600_000);

afterAll(async () => {
  await web?.close();
});

/** How far the document scrolls sideways, and where the sign-out control sits. */
async function layout(page: Page) {
  return page.evaluate(() => {
    const doc = document.documentElement;
    const signOut = [...document.querySelectorAll('a, button')].find((el) => el.textContent?.trim() === 'Sign out');
    const r = signOut?.getBoundingClientRect();
    return {
      scrollWidth: doc.scrollWidth,
      clientWidth: doc.clientWidth,
      signOut: r ? { left: r.left, right: r.right, top: r.top, bottom: r.bottom } : null,
      viewport: { width: window.innerWidth, height: window.innerHeight },
      // What sticks out (the outermost such elements), to say which one to fix when the check fails.
      wide: [...document.querySelectorAll('body *')]
        .filter((el) => el.getBoundingClientRect().right > doc.clientWidth + 1)
        .filter((el) => !el.parentElement || el.parentElement === document.body || el.parentElement.getBoundingClientRect().right <= doc.clientWidth + 1)
        .slice(0, 5)
        .map((el) => `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ''}.${String(el.className).split(' ').slice(0, 3).join('.')}`),
    };
  });
}

/** Each test visits several pages and runs axe-core on each: slow on a busy two-core machine. */
const LONG = 300_000;

const SIZES = [
  { width: 390, height: 844 },
  { width: 1366, height: 768 },
];

describe.each(SIZES)('every page at $width px wide', (size) => {
  let s: Session;
  let current: DemoRole | null = null;
  const slug = demoProject.slug;
  const as = async (role: DemoRole) => {
    s ??= await openBrowser(size);
    if (current !== role) {
      const a = demoAccount(role);
      await signIn(s.page, web.url, a.email, a.password);
      current = role;
    }
    return s.page;
  };

  afterAll(async () => {
    expect(s?.errors ?? []).toEqual([]);
    await s?.close();
  });

  /** The checks of this file on the page as it is now; `signedIn` pages must show the sign-out control. */
  async function check(page: Page, name: string, signedIn = true) {
    await page.evaluate(() => document.fonts.ready);
    await screenshot(page, `page-${name}`);
    const l = await layout(page);
    expect(l.scrollWidth, `${name}: the document scrolls sideways (${l.wide.join(', ')})`).toBeLessThanOrEqual(l.clientWidth);
    if (signedIn) {
      expect(l.signOut, `${name}: a sign-out control`).not.toBeNull();
      expect(l.signOut!.left, `${name}: sign-out on screen`).toBeGreaterThanOrEqual(0);
      expect(l.signOut!.right, `${name}: sign-out on screen`).toBeLessThanOrEqual(l.viewport.width);
      expect(l.signOut!.bottom, `${name}: sign-out on screen`).toBeLessThanOrEqual(l.viewport.height);
    }
    expect(await axeViolations(page), `${name}: axe-core, serious and critical`).toEqual([]);
  }

  it('sign-in', async () => {
    s ??= await openBrowser(size);
    await s.page.goto(`${web.url}/signin`);
    await s.page.getByRole('heading', { name: 'Sign in to Pleat' }).waitFor();
    await check(s.page, 'signin', false);
  }, LONG);

  it('projects (admin, with the new-project form), users', async () => {
    const page = await as('admin');
    await page.goto(`${web.url}/`);
    await page.locator(`[data-project="${slug}"]`).getByText(/Pass|Fail|Invalid/).waitFor();
    await check(page, 'projects-admin');
    await page.goto(`${web.url}/admin/users`);
    await page.locator('tr[data-user]').first().waitFor();
    await check(page, 'users');
  }, LONG);

  it('branches, a branch history (lead)', async () => {
    const page = await as('lead');
    await page.goto(`${web.url}/projects/${slug}`);
    await page.locator('tr[data-branch]').first().waitFor();
    await check(page, 'branches');
    await page.goto(`${web.url}/projects/${slug}/branches/main`);
    await page.getByTestId('runs-table').waitFor();
    await page.locator('.recharts-surface').first().waitFor();
    await check(page, 'branch-history');
  }, LONG);

  it('a failing run and a passing run (lead)', async () => {
    const page = await as('lead');
    const branches = await page.evaluate(async (slug) => (await fetch(`/api/projects/${slug}/branches`)).json(), slug);
    for (const verdict of ['fail', 'pass']) {
      const b = branches.branches.find((x: { latest: { verdict: string } | null }) => x.latest?.verdict === verdict);
      expect(b, `the demo has a branch whose latest run is ${verdict}`).toBeTruthy();
      await page.goto(`${web.url}/projects/${slug}/runs/${b.latest.id}`);
      await page.getByTestId('design-report').waitFor();
      await page.getByTestId('comparison').first().waitFor();
      await check(page, `run-${verdict}`);
    }
  }, LONG);

  it('rules, tokens, git host, members (lead)', async () => {
    const page = await as('lead');
    await page.goto(`${web.url}/projects/${slug}/rules`);
    await page.getByTestId('rule-history').waitFor();
    await check(page, 'rules');
    await page.goto(`${web.url}/projects/${slug}/tokens`);
    await page.getByRole('heading', { name: 'CI tokens' }).first().waitFor();
    await check(page, 'tokens');
    await page.goto(`${web.url}/projects/${slug}/host`);
    await page.getByRole('heading', { name: 'Git host' }).first().waitFor();
    await check(page, 'host');
    await page.goto(`${web.url}/projects/${slug}/members`);
    await page.locator('tr[data-member]').first().waitFor();
    await check(page, 'members');
  }, LONG);

  it('rules as a viewer, a page that does not exist', async () => {
    const page = await as('viewer');
    await page.goto(`${web.url}/projects/${slug}/rules`);
    await page.getByTestId('rules-readonly').waitFor();
    await check(page, 'rules-viewer');
    await page.goto(`${web.url}/no/such/page`);
    await page.locator('h1').waitFor();
    await check(page, 'not-found');
  }, LONG);

  it('try a design: empty, a plan with no retiming, an invalid file (engineer)', async () => {
    const page = await as('engineer');
    await page.goto(`${web.url}/try?project=${slug}`);
    await page.getByTestId('drop-zone').waitFor();
    await check(page, 'try-empty');
    await page.locator('input[type=file]').setInputFiles(join(ROOT, 'examples', 'envelope-unretimable.fold.yaml'));
    await page.getByTestId('design-report').waitFor();
    await check(page, 'try-unretimable');
    await page.goto(`${web.url}/try?project=${slug}`);
    await page.locator('input[type=file]').setInputFiles(join(ROOT, 'tests', 'fixtures', 'invalid', 'yaml-syntax.fold.yaml'));
    await page.getByTestId('source-view').waitFor();
    await check(page, 'try-invalid');
  }, LONG);

  it('an invitation, then signing out', async () => {
    const page = await as('lead');
    const email = `phone-check-${size.width}@example.com`;
    const res = await page.evaluate(
      async ({ slug, email }) => (await fetch(`/api/projects/${slug}/members`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email, role: 'viewer' }) })).status,
      { slug, email },
    );
    expect(res).toBe(202);
    let link: string | undefined;
    for (let i = 0; i < 100 && !link; i++) {
      const mail = web.smtp.messages.find((m) => m.to.includes(email));
      link = mail?.raw.replace(/=\r?\n/g, '').match(/https?:\/\/[^\s"<>]+\/invitations\/[A-Za-z0-9_-]+/)?.[0];
      if (!link) await new Promise((r) => setTimeout(r, 100));
    }
    expect(link, 'invitation e-mail with a link').toBeTruthy();
    await page.goto(`${web.url}/signout`);
    await page.getByRole('heading', { name: 'You are signed out' }).waitFor();
    current = null;
    await check(page, 'signout', false);
    await page.goto(link!);
    await page.getByText(`${email} is invited`).waitFor();
    await check(page, 'invitation', false);
  }, LONG);
});
