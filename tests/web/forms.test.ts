// Forms that used to save or show the wrong thing: a fraction typed into a per-cent field of the
// team rules, and a project slug the browser never checked. The values the server stores are
// read back through the API the CLI uses.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ensureChromium, ensureWebBuild, openBrowser, screenshot, signIn, type Session } from './browser';
import { demoAccount, demoProject } from './demo';
import { startWebServer, type WebServer } from './server';
import { designEntry, makeCiToken, makeReport, makeUser } from '../../server/test/factories';
import { startFakeGitHost } from '../../server/test/fakeGitHost';

let web: WebServer;
let s: Session;

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  s = await openBrowser();
}, 600_000);

afterAll(async () => {
  await s?.close();
  await web?.close();
});

const slug = demoProject.slug;
const rulesNow = () => s.page.evaluate(async (slug) => (await (await fetch(`/api/projects/${slug}/rules`)).json()).rules, slug);

describe('the team rules form', () => {
  it('does not save 0.72 typed in a per-cent field as 0.72 %: it offers 72 % and shows what the gate will apply', async () => {
    const { page } = s;
    const a = demoAccount('lead');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/projects/${slug}/rules`);
    const field = page.getByLabel(/^Design utilization floor/);
    await field.waitFor();
    const before = await rulesNow();

    await field.fill('0.72');
    const note = page.getByTestId('rule-min_utilization-note-fraction');
    await note.getByText('looks like a fraction').waitFor();
    expect(await field.getAttribute('aria-invalid')).toBe('true');
    // For a person to look at, at a laptop and a phone width.
    await screenshot(page, 'rules-fraction', false);
    await page.setViewportSize({ width: 390, height: 844 });
    await field.scrollIntoViewIfNeeded();
    await screenshot(page, 'rules-fraction', false);
    await page.setViewportSize({ width: 1366, height: 768 });
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.getByRole('button', { name: 'Save the rules' }).waitFor();
    // Nothing was saved, and no success was claimed.
    expect(await page.getByRole('status').filter({ hasText: 'Saved' }).count()).toBe(0);
    expect(await rulesNow()).toEqual(before);

    // The per-cent reading, one click away: 72 % is the fraction 0.72 (common practice, no source).
    await note.getByRole('button', { name: 'Use 72 %' }).click();
    expect(await field.inputValue()).toBe('72');
    expect(await page.getByTestId('rule-min_utilization-note-applies').textContent()).toBe('Applies 72 % (0.72 in pleat.config.yaml)');
    expect(await page.getByTestId('rules-pending').textContent()).toContain('Design utilization floor');
    expect(await page.getByTestId('rules-pending').textContent()).toContain('72%');
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.getByRole('status').filter({ hasText: 'Saved' }).waitFor();
    expect((await rulesNow()).min_utilization).toBe(0.72);
  });

  it('takes under one per cent only with the sign, and refuses more than 100 %', async () => {
    const { page } = s;
    const field = page.getByLabel(/^Unit utilization floor/);
    await field.fill('0.5 %');
    expect(await page.getByTestId('rule-min_unit_utilization-note-applies').textContent()).toBe('Applies 0.5 % (0.005 in pleat.config.yaml)');
    await field.fill('150');
    await page.getByText('At most 100 %').waitFor();
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.getByRole('button', { name: 'Save the rules' }).waitFor();
    expect((await rulesNow()).min_unit_utilization).not.toBe(1.5);
  });

  it('sets the simulate gates max_overflows and min_sqnr_db: refused before saving when out of range, saved with the reason', async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${slug}/rules`);
    const overflows = page.getByLabel(/^Overflow ceiling/);
    const sqnr = page.getByLabel(/^SQNR floor/);
    await overflows.waitFor();
    const before = await rulesNow();

    // Out of the rules schema's range (overflows a whole number >= 0, SQNR -1000 to 1000 dB): nothing is sent.
    const sent: string[] = [];
    const watch = (r: { method(): string; url(): string }) => {
      if (r.method() === 'PUT' && r.url().endsWith('/rules')) sent.push(r.url());
    };
    page.on('request', watch);
    await overflows.fill('-1');
    await sqnr.fill('2000');
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.getByText('A whole number from 0 to 2,147,483,647.').waitFor();
    await page.getByText('A number of dB from -1000 to 1000, such as 60.').waitFor();
    expect(await overflows.getAttribute('aria-invalid')).toBe('true');
    expect(sent).toEqual([]);
    page.off('request', watch);
    expect(await rulesNow()).toEqual(before);

    await overflows.fill('3');
    await sqnr.fill('60.5');
    const pending = await page.getByTestId('rules-pending').textContent();
    expect(pending).toContain('Overflow ceiling');
    expect(pending).toContain('60.5 dB');
    await page.getByLabel('Reason for the change').fill('the new DAC takes 14 bits');
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.locator('#current-rules').getByRole('status').filter({ hasText: 'Saved 2 changes' }).waitFor();
    const now = await rulesNow();
    expect(now.max_overflows).toBe(3);
    expect(now.min_sqnr_db).toBe(60.5);
    // The other rules are kept as they were.
    expect({ ...now, max_overflows: undefined, min_sqnr_db: undefined }).toEqual({ ...before, max_overflows: undefined, min_sqnr_db: undefined });
    const history = page.getByTestId('rule-history');
    await history.getByText('SQNR floor').waitFor();
    expect(await history.locator('tr', { hasText: 'Overflow ceiling' }).first().textContent()).toContain('the new DAC takes 14 bits');

    // Saving another rule keeps the simulate gates (the form sends every rule it holds).
    await page.reload();
    await page.getByLabel(/^Register ceiling/).fill('5000');
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.locator('#current-rules').getByRole('status').filter({ hasText: 'Saved' }).waitFor();
    expect(await rulesNow()).toMatchObject({ max_overflows: 3, min_sqnr_db: 60.5, max_registers: 5000 });
  });
});

describe('keeping runs (retention of non-base branches)', () => {
  it('a lead sets the days the server keeps runs of other branches; nonsense is refused before saving', async () => {
    const { page } = s;
    const a = demoAccount('lead');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/projects/${slug}/rules`);
    const field = page.getByLabel('Keep runs of other branches for (days)');
    await field.waitFor();
    const save = page.locator('#retention').getByRole('button', { name: 'Save' });
    await field.fill('0');
    expect(await save.isDisabled()).toBe(true);
    await field.fill('30');
    // The change carries a reason into the rules history, as every other rule change does.
    await page.locator('#retention').getByLabel('Reason (kept in the history)').fill('the disk of the server is filling up');
    await save.click();
    await page.locator('#retention').getByRole('status').filter({ hasText: 'Saved' }).waitFor();
    const days = await page.evaluate(async (slug) => (await (await fetch(`/api/projects/${slug}`)).json()).project.branchRunDays, slug);
    expect(days).toBe(30);
    const change = await page.evaluate(async (slug) => (await (await fetch(`/api/projects/${slug}/rules/history?limit=1`)).json()).changes[0], slug);
    expect(change).toMatchObject({ rule: 'branch_run_days', newValue: 30, reason: 'the disk of the server is filling up' });
    expect(s.errors).toEqual([]);
  });
});

describe('the git host connection', () => {
  it('a lead connects the host, the token is never shown again, and a failing host shows on the project with its time', async () => {
    const host = await startFakeGitHost();
    try {
      const { page } = s;
      const a = demoAccount('lead');
      await signIn(page, web.url, a.email, a.password);
      await page.goto(`${web.url}/projects/${slug}`);
      await page.getByRole('link', { name: 'Git host' }).click();
      await page.getByLabel('GitHub').check();
      await page.getByLabel('API address').fill(host.githubUrl);
      await page.getByLabel('Repository').fill('acme/front-end');
      await page.getByLabel('Token').fill(host.token);
      await page.getByRole('button', { name: 'Connect' }).click();
      await page.getByRole('status').filter({ hasText: 'Saved' }).waitFor();
      // Only the last 4 characters come back, in the field's hint; the field itself is empty.
      const token = page.getByLabel('Token');
      expect(await token.getAttribute('placeholder')).toContain(`…${host.token.slice(-4)}`);
      expect(await token.inputValue()).toBe('');
      expect(await page.content()).not.toContain(host.token);

      // The host answers 500 to the feedback of an upload: the upload is stored, the project says so.
      host.openRequest('acme/front-end', 'feature/probe', 3);
      host.setMode('fail');
      const project = (await web.ctx.db.models.Project.findOne({ where: { slug } }))!;
      const { secret } = await makeCiToken(web.ctx, project);
      const res = await fetch(`${web.url}/api/projects/${slug}/runs`, {
        method: 'POST', headers: { authorization: `Bearer ${secret}`, 'content-type': 'application/json' },
        body: JSON.stringify(makeReport({ branch: 'feature/probe', designs: [designEntry('probe')] })),
      });
      expect(res.status).toBe(201);
      await web.ctx.mail.settled();
      await page.goto(`${web.url}/projects/${slug}`);
      const banner = page.getByTestId('host-error');
      await banner.waitFor();
      expect(await banner.textContent()).toMatch(/acme\/front-end failed.*500/);
      expect(await banner.locator('time').getAttribute('datetime')).toMatch(/^\d{4}-\d\d-\d\dT/);
      await screenshot(page, 'host-error', false);

      // The next feedback works: the banner goes, the status is on the host.
      host.setMode('ok');
      const again = await fetch(`${web.url}/api/projects/${slug}/runs`, {
        method: 'POST', headers: { authorization: `Bearer ${secret}`, 'content-type': 'application/json' },
        body: JSON.stringify(makeReport({ branch: 'feature/probe', designs: [designEntry('probe')] })),
      });
      expect(again.status).toBe(201);
      await web.ctx.mail.settled();
      await page.reload();
      await page.getByRole('link', { name: 'Git host' }).waitFor();
      expect(await page.getByTestId('host-error').count()).toBe(0);
      expect(host.statuses.map((x) => x.state)).toEqual(['success']);
      expect(s.errors).toEqual([]);
    } finally {
      await host.stop();
    }
  });
});

/** Counts the page's requests of one method whose URL contains `part` (a click that was cancelled sends none). */
function requestsTo(page: Session['page'], method: string, part: string): { count: number } {
  const seen = { count: 0 };
  page.on('request', (r) => { if (r.method() === method && r.url().includes(part)) seen.count++; });
  return seen;
}

describe('reasons, reverts and confirmations', () => {
  it('keeps the reason of a rule change, and goes back to an earlier change only after the prompt', async () => {
    const { page } = s;
    const a = demoAccount('lead');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/projects/${slug}/rules`);
    const field = page.getByLabel(/^Design utilization floor/);
    await field.waitFor();
    const before = await rulesNow();
    await field.fill('65');
    await page.getByLabel(/^Reason for the change/).fill('Probe: the new front end folds tighter');
    await page.getByRole('button', { name: 'Save the rules' }).click();
    await page.locator('#current-rules').getByRole('status').filter({ hasText: 'Saved' }).waitFor();
    const history = page.getByTestId('rule-history');
    await history.locator('tbody tr').first().filter({ hasText: 'Probe: the new front end folds tighter' }).waitFor();
    expect((await rulesNow()).min_utilization).toBe(0.65);

    // Dismissed, the prompt reverts nothing: of two clicks, only the accepted one reaches the server.
    const sent = requestsTo(page, 'POST', '/rules/revert');
    const back = history.locator('tbody tr').nth(1).getByRole('button', { name: /Back to here/ });
    page.once('dialog', (d) => void d.dismiss());
    await back.click();
    expect((await rulesNow()).min_utilization).toBe(0.65);
    // Accepted with a reason: the rules are those before the save, and the revert is in the history.
    page.once('dialog', (d) => void d.accept('The probe is over'));
    await back.click();
    await page.locator('#rule-history').getByRole('status').filter({ hasText: 'Back to the rules after change' }).waitFor();
    expect(await rulesNow()).toEqual(before);
    await history.locator('tbody tr').first().filter({ hasText: 'The probe is over' }).waitFor();
    expect(sent.count).toBe(1);
    expect(s.errors).toEqual([]);
  });

  it('revokes a CI token and deactivates an account only after a confirmation', async () => {
    const { page } = s;
    await signIn(page, web.url, demoAccount('admin').email, demoAccount('admin').password);
    await page.goto(`${web.url}/projects/${slug}/tokens`);
    await page.getByLabel('Name').fill('confirm probe');
    await page.getByRole('button', { name: 'Create token' }).click();
    const row = page.locator('tr[data-token="confirm probe"]');
    const revoke = row.getByRole('button', { name: /Revoke/ });
    const revokes = requestsTo(page, 'DELETE', '/tokens/');
    page.once('dialog', (d) => void d.dismiss());
    await revoke.click();
    page.once('dialog', (d) => void d.accept());
    await revoke.click();
    await row.getByText(/revoked/).waitFor();
    expect(revokes.count).toBe(1);

    const person = await makeUser(web.ctx, { name: 'Confirm Probe' });
    await page.goto(`${web.url}/admin/users`);
    const user = page.locator(`tr[data-user="${person.email}"]`);
    const deactivate = user.getByRole('button', { name: /Deactivate/ });
    const patches = requestsTo(page, 'PATCH', '/api/users/');
    let asked = '';
    page.once('dialog', (d) => { asked = d.message(); void d.dismiss(); });
    await deactivate.click();
    expect(asked).toContain('Deactivate Confirm Probe');
    page.once('dialog', (d) => void d.accept());
    await deactivate.click();
    await user.getByText('deactivated').waitFor();
    expect(patches.count).toBe(1);
    expect(s.errors).toEqual([]);
  });
});

describe('deleting a project', () => {
  it('an admin deletes a project only after typing its slug, and it is gone', async () => {
    const { page } = s;
    const a = demoAccount('admin');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/`);
    const created = await page.evaluate(async () => {
      const r = await fetch('/api/projects', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ slug: 'scratch-probe', name: 'Scratch probe' }) });
      return r.status;
    });
    expect(created).toBe(201);
    await page.reload();
    const field = page.getByLabel('Slug of the project to delete');
    await field.waitFor();
    const button = page.locator('form').filter({ has: field }).getByRole('button');
    await field.fill('scratch-prob');
    expect(await button.isDisabled()).toBe(true);
    await field.fill('scratch-probe');
    await button.click();
    await page.getByRole('status').filter({ hasText: 'Deleted scratch-probe' }).waitFor();
    const slugs = await page.evaluate(async () => (await (await fetch('/api/projects')).json()).projects.map((p: { slug: string }) => p.slug));
    expect(slugs).not.toContain('scratch-probe');
    expect(slugs).toContain(slug);
    expect(s.errors).toEqual([]);
  });
});

describe('a new project', () => {
  it('has a slug pattern the browser can compile, and says in words what a slug is, also when the server refuses one', async () => {
    const { page } = s;
    const a = demoAccount('admin');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/`);
    const input = page.getByLabel('Slug', { exact: true });
    await input.waitFor();
    // HTML compiles `pattern` as ^(?:pattern)$ with the v flag; an invalid one is ignored (HTML standard).
    const compiles = await input.evaluate((el) => {
      try {
        new RegExp(`^(?:${(el as HTMLInputElement).pattern})$`, 'v');
        return true;
      } catch {
        return false;
      }
    });
    expect(compiles).toBe(true);
    await page.getByLabel('Name').fill('Radar Frontend');
    await input.fill('Radar Frontend');
    expect(await input.evaluate((el) => (el as HTMLInputElement).validity.patternMismatch)).toBe(true);
    const note = await page.getByTestId('slug-note').textContent();
    expect(note).toContain('lower-case letters, digits and dashes');
    expect(note).toContain('radar-frontend');

    // Past the browser's own check (as a script or an old browser would be), the server's refusal reads the same way.
    await page.locator('form').filter({ has: input }).evaluate((f) => ((f as HTMLFormElement).noValidate = true));
    await page.getByRole('button', { name: 'Create' }).click();
    const alert = page.getByRole('alert');
    await alert.waitFor();
    const text = await alert.textContent();
    expect(text).toContain('A slug is 1 to 63 lower-case letters');
    expect(text).not.toMatch(/request body|must match pattern/);
    expect(s.errors).toEqual([]);
  });
});
