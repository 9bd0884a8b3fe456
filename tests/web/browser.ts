// Headless Chromium for the browser tests: Debian's package (installed by
// scripts/ensure-chromium.sh when missing), driven by playwright-core. No browser is downloaded.
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { AxeBuilder } from '@axe-core/playwright';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { ROOT } from './server';

export const CHROMIUM = process.env.PLEAT_CHROMIUM ?? '/usr/bin/chromium';
export const SCREENSHOTS = join(ROOT, 'test-artifacts', 'screenshots');

/** Flags that keep Chromium quiet and self-contained in a container (the closed network of this machine; see docs/web.md, browser tests). */
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
  // src/ takes types and a few small functions from shared/ (the RTL button, links to the git host).
  const sources = Math.max(newestMtime(join(ROOT, 'src')), newestMtime(join(ROOT, 'shared')), statSync(join(ROOT, 'index.html')).mtimeMs);
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
 * What axe-core (the @axe-core/playwright package, rules of WCAG 2.x and common practice) finds of
 * impact serious or critical on the page as it is now, one line per element, for a readable failure.
 */
export async function axeViolations(page: Page): Promise<string[]> {
  const result = await new AxeBuilder({ page }).analyze();
  return result.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .flatMap((v) => v.nodes.slice(0, 5).map((n) => `${v.id} (${v.impact}): ${n.target.join(' ')}: ${n.failureSummary?.split('\n').slice(1, 2).join('').trim()}`));
}
