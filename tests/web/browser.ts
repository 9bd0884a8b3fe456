// Headless Chromium for the browser tests: Debian's package (installed by
// scripts/ensure-chromium.sh when missing), driven by playwright-core. No browser is downloaded.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ROOT } from './server';

export const CHROMIUM = process.env.PLEAT_CHROMIUM ?? '/usr/bin/chromium';
export const SCREENSHOTS = join(ROOT, 'test-artifacts', 'screenshots');

/** Flags that keep Chromium quiet and self-contained in a container (stack.md). */
const ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

export function ensureChromium(): void {
  if (existsSync(CHROMIUM)) return;
  execFileSync('bash', [join(ROOT, 'scripts', 'ensure-chromium.sh')], { stdio: 'inherit' });
}

function newestMtime(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, entry.name);
    newest = Math.max(newest, entry.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs);
  }
  return newest;
}

/**
 * Builds the web app when dist/web is missing or older than its sources (npm test builds first,
 * so this only matters when one test file is run alone). A lock folder keeps two test files from
 * building at once.
 */
export function ensureWebBuild(): void {
  const index = join(ROOT, 'dist', 'web', 'index.html');
  // src/ takes only types from shared/, so shared/ does not make the build stale.
  const sources = Math.max(newestMtime(join(ROOT, 'src')), statSync(join(ROOT, 'index.html')).mtimeMs);
  const fresh = () => existsSync(index) && statSync(index).mtimeMs >= sources;
  if (fresh()) return;
  const lock = join(ROOT, 'dist', '.web-build-lock');
  mkdirSync(join(ROOT, 'dist'), { recursive: true });
  for (;;) {
    try {
      mkdirSync(lock);
      break;
    } catch {
      // Another test file is building; wait for it, then use its build.
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 500);
      if (fresh()) return;
      // A lock older than two minutes belongs to a process that died.
      if (existsSync(lock) && Date.now() - statSync(lock).mtimeMs > 120_000) rmSync(lock, { recursive: true, force: true });
    }
  }
  try {
    if (!fresh()) execFileSync(process.execPath, [join(ROOT, 'node_modules', 'vite', 'bin', 'vite.js'), 'build', '--logLevel', 'warn'], { cwd: ROOT, stdio: 'inherit' });
  } finally {
    rmSync(lock, { recursive: true, force: true });
  }
}

export interface Session {
  context: BrowserContext;
  page: Page;
  /** Uncaught errors of the page and console errors, for the tests to assert there are none. */
  errors: string[];
  close(): Promise<void>;
}

/** A fresh browser profile (no cookies, no cache) with one page. */
export async function openBrowser(o: { width?: number; height?: number } = {}): Promise<Session> {
  const dir = mkdtempSync(join(tmpdir(), 'pleat-chromium-'));
  const context = await chromium.launchPersistentContext(dir, {
    executablePath: CHROMIUM,
    headless: true,
    args: ARGS,
    viewport: { width: o.width ?? 1366, height: o.height ?? 768 },
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(`page error: ${e.message}`));
  page.on('console', (m) => {
    // A refused request (401/403/404) is logged by the browser itself; the tests check those answers directly.
    if (m.type() === 'error' && !/Failed to load resource/.test(m.text())) errors.push(`console: ${m.text()}`);
  });
  return {
    context,
    page,
    errors,
    async close() {
      await context.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

export async function signIn(page: Page, base: string, email: string, password: string): Promise<void> {
  await page.goto(`${base}/signin`);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/signin'));
}

/** Saves a screenshot as a test artifact: test-artifacts/screenshots/<name>-<width>x<height>.png. */
export async function screenshot(page: Page, name: string, fullPage = true): Promise<string> {
  mkdirSync(SCREENSHOTS, { recursive: true });
  const size = page.viewportSize();
  const file = join(SCREENSHOTS, `${name}-${size?.width}x${size?.height}.png`);
  await page.screenshot({ path: file, fullPage });
  return file;
}

/**
 * A small audit of what keyboard and screen-reader users need from every page (common practice,
 * no source; the rules of WCAG 2.x in spirit): form fields with a label, tables with a caption
 * and header cells, buttons and links with a name, scrollable regions reachable by keyboard,
 * and one h1. Returns the problems found.
 */
export async function auditPage(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const problems: string[] = [];
    const describe = (el: Element) => `${el.tagName.toLowerCase()}${el.id ? `#${el.id}` : ''}${el.className && typeof el.className === 'string' ? `.${el.className.split(' ').slice(0, 2).join('.')}` : ''}`;
    const visible = (el: Element) => {
      const r = (el as HTMLElement).getBoundingClientRect();
      return r.width > 0 || r.height > 0 || el.classList.contains('sr-only');
    };
    for (const el of document.querySelectorAll('input, select, textarea')) {
      const input = el as HTMLInputElement;
      if (input.type === 'hidden') continue;
      const labelled =
        input.labels?.length || input.getAttribute('aria-label') || input.getAttribute('aria-labelledby') || input.getAttribute('title');
      if (!labelled) problems.push(`form field without a label: ${describe(el)}`);
    }
    for (const t of document.querySelectorAll('table')) {
      if (!t.querySelector('caption') && !t.getAttribute('aria-label') && !t.getAttribute('aria-labelledby')) problems.push(`table without a caption: ${describe(t)}`);
      if (!t.querySelector('th')) problems.push(`table without header cells: ${describe(t)}`);
    }
    for (const el of document.querySelectorAll('button, a[href]')) {
      if (!visible(el)) continue;
      const name = (el.textContent ?? '').trim() || el.getAttribute('aria-label') || el.getAttribute('title');
      if (!name) problems.push(`${el.tagName.toLowerCase()} without a name: ${describe(el)}`);
    }
    for (const el of document.querySelectorAll('div, ul, figure')) {
      const style = getComputedStyle(el);
      const scrolls = /(auto|scroll)/.test(style.overflowY + style.overflowX) && (el.scrollHeight > el.clientHeight + 1 || el.scrollWidth > el.clientWidth + 1);
      if (!scrolls) continue;
      const reachable = (el as HTMLElement).tabIndex >= 0 || el.querySelector('a[href], button, input, select, [tabindex="0"]');
      if (!reachable) problems.push(`scrollable region not reachable by keyboard: ${describe(el)}`);
    }
    const h1 = document.querySelectorAll('h1').length;
    if (h1 !== 1) problems.push(`${h1} h1 headings (want 1)`);
    return problems;
  });
}
