// The web app and the CLI together, as a team uses them: a lead creates a CI token in the
// browser, `pleat check --upload` sends a run with it, and the run appears in the branch's
// history; a rule the lead tightens in the browser is applied by the next `pleat check`.
import { copyFileSync, mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execa } from 'execa';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Report } from '../../shared/types';
import { BIN, ensureBuilt } from '../cli/helpers';
import { ensureChromium, ensureWebBuild, openBrowser, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { ROOT, startWebServer, type WebServer } from './server';

let web: WebServer;
let lead: Session;
let token = '';
const repo = mkdtempSync(join(tmpdir(), 'pleat-web-repo-'));
const branch = 'web/upload-check';
const slug = demoProject.slug;

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  await ensureBuilt();
  web = await startWebServer();
  lead = await openBrowser();
  const a = demoAccount('lead');
  await signIn(lead.page, web.url, a.email, a.password);
  // A repository of our own with one design and a config pointing at this server.
  mkdirSync(join(repo, 'hw'));
  copyFileSync(join(ROOT, 'examples', 'sensor-frontend.fold.yaml'), join(repo, 'hw', 'sensor-frontend.fold.yaml'));
  writeFileSync(
    join(repo, 'pleat.config.yaml'),
    ['designs: ["hw/**/*.fold.yaml"]', 'server:', `  url: ${web.url}`, `  project: ${slug}`, ''].join('\n'),
  );
}, 600_000); // the first run may install Chromium with apt-get

afterAll(async () => {
  await lead?.close();
  await web?.close();
});

function pleat(args: string[], commit: string) {
  return execa(process.execPath, [BIN, ...args], {
    cwd: repo,
    reject: false,
    env: { PLEAT_TOKEN: token, PLEAT_BRANCH: branch, PLEAT_COMMIT: commit, NO_COLOR: '1' },
  });
}

describe('the CLI and the web app', () => {
  it('uploads a run with a token made in the browser; the run shows in the branch history', async () => {
    const { page } = lead;
    await page.goto(`${web.url}/projects/${slug}/tokens`);
    await page.getByLabel('Name').fill('web test pipeline');
    await page.getByRole('button', { name: 'Create token' }).click();
    token = (await page.getByTestId('token-secret').textContent())!.trim();
    expect(token).toMatch(/^pleat_ci_/);

    const commit = randomBytes(20).toString('hex');
    const r = await pleat(['check', '--upload', '--format', 'json', '--output', 'report.json'], commit);
    expect(r.exitCode, r.stderr).toBe(0);
    const report = JSON.parse(readFileSync(join(repo, 'report.json'), 'utf8')) as Report;
    expect(report.git.commit).toBe(commit);

    await page.goto(`${web.url}/projects/${slug}`);
    await page.locator(`tr[data-branch="${branch}"]`).getByRole('link', { name: branch, exact: true }).click();
    await page.getByRole('heading', { level: 1, name: branch }).waitFor();
    const row = page.locator(`tr[data-commit="${commit}"]`);
    await row.getByRole('link').click();
    await page.getByTestId('design-report').getByRole('heading', { name: report.designs[0].name! }).waitFor();
    expect(lead.errors).toEqual([]);
  });

  it('applies a rule that a lead tightened in the browser to the next pleat check', async () => {
    expect(token, 'the token of the previous test').not.toBe('');
    const before = JSON.parse(readFileSync(join(repo, 'report.json'), 'utf8')) as Report;
    const minimum = before.designs[0].registers?.minimum;
    expect(minimum).toBeGreaterThan(0);
    const ceiling = minimum! - 1;

    const { page } = lead;
    await page.goto(`${web.url}/projects/${slug}/rules`);
    await page.getByLabel('Register ceiling').fill(String(ceiling));
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.getByText('Saved 1 change.', { exact: false }).waitFor();
    const change = page.getByTestId('rule-history').getByRole('row').filter({ hasText: 'Register ceiling' }).first();
    expect(await change.textContent()).toContain(demoAccount('lead').name);
    expect(await change.textContent()).toContain(`not set → ${ceiling}`);

    const r = await pleat(['check', '--format', 'json', '--output', 'report2.json'], randomBytes(20).toString('hex'));
    expect(r.exitCode, r.stderr).toBe(1);
    const after = JSON.parse(readFileSync(join(repo, 'report2.json'), 'utf8')) as Report;
    expect(after.rules.max_registers).toEqual({ value: ceiling, source: 'team' });
    const v = after.designs[0].violations.find((x) => x.rule === 'max_registers');
    expect(v).toMatchObject({ source: 'team', limit: ceiling, actual: minimum });
  });
});
