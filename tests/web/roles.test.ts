// Each demo role signs in through the web app and finds exactly what docs/roles.md's role table
// gives it; what the pages do not offer, the server refuses too (checked from the same page).
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { ensureChromium, ensureWebBuild, openBrowser, signIn, type Session } from './browser';
import { demoAccount, demoProject, type DemoRole } from './demo';
import { startWebServer, type WebServer } from './server';

let web: WebServer;
// One browser for the whole file: each role signs in, and its last test signs it out again.
let s: Session;

beforeAll(async () => {
  ensureChromium();
  ensureWebBuild();
  web = await startWebServer();
  s = await openBrowser();
}, 600_000); // the first run may install Chromium with apt-get

afterAll(async () => {
  await s?.close();
  await web?.close();
});

/** What each role may do, from the role table of docs/roles.md. */
const MAY: Record<DemoRole, { rules: boolean; tokens: boolean; members: boolean; tryDesign: boolean; watch: boolean; users: boolean }> = {
  admin: { rules: true, tokens: true, members: true, tryDesign: true, watch: true, users: true },
  lead: { rules: true, tokens: true, members: true, tryDesign: true, watch: true, users: false },
  engineer: { rules: false, tokens: false, members: false, tryDesign: true, watch: true, users: false },
  viewer: { rules: false, tokens: false, members: false, tryDesign: false, watch: false, users: false },
};

const roleWord: Record<DemoRole, string> = { admin: 'Admin', lead: 'Lead', engineer: 'Engineer', viewer: 'Viewer' };

/** Status of a request made by the signed-in page itself (its cookie, its origin). */
async function statusOf(s: Session, method: string, path: string, body?: unknown): Promise<number> {
  return s.page.evaluate(
    async ({ method, path, body }) => {
      const r = await fetch(path, {
        method,
        credentials: 'same-origin',
        headers: body === undefined ? {} : { 'content-type': 'application/json' },
        body: body === undefined ? undefined : JSON.stringify(body),
      });
      return r.status;
    },
    { method, path, body },
  );
}

describe.each(Object.keys(MAY) as DemoRole[])('signed in as the demo %s', (role) => {
  const may = MAY[role];
  const slug = demoProject.slug;

  beforeAll(async () => {
    s.errors.length = 0;
    const a = demoAccount(role);
    await signIn(s.page, web.url, a.email, a.password);
  });

  it('sees the demo project, its branches, a run, and its own name and role in the top bar', async () => {
    const { page } = s;
    await page.getByRole('link', { name: new RegExp(demoProject.name.replace(/[()]/g, '\\$&')) }).click();
    await page.waitForURL(`**/projects/${slug}`);
    await expect(page.getByTestId('whoami').textContent()).resolves.toContain(demoAccount(role).name);
    await expect(page.getByTestId('current-role').textContent()).resolves.toBe(roleWord[role]);
    // The base branch row links to its latest run, which renders a design report.
    await page.locator('tr[data-branch="main"]').getByRole('link', { name: /Latest run of main/ }).click();
    await page.getByTestId('design-report').waitFor();
    expect(await page.getByRole('heading', { level: 1 }).textContent()).toMatch(/^Run of [0-9a-f]{8}/);
    // Plans and sweeps are started by engineers and above, the roles that try designs.
    expect(await page.getByRole('button', { name: 'Plan this design' }).count()).toBe(may.tryDesign ? 1 : 0);
  });

  it('is offered only the tabs, links and buttons of its role', async () => {
    const { page } = s;
    await page.goto(`${web.url}/projects/${slug}`);
    await page.locator('tr[data-branch]').first().waitFor();
    const project = page.getByRole('navigation', { name: 'Project' });
    expect(await project.getByRole('link', { name: 'CI tokens' }).count()).toBe(may.tokens ? 1 : 0);
    expect(await project.getByRole('link', { name: 'Members' }).count()).toBe(may.members ? 1 : 0);
    // The git host is a lead's setting, like the tokens (docs/roles.md).
    expect(await project.getByRole('link', { name: 'Git host' }).count()).toBe(may.tokens ? 1 : 0);
    const main = page.getByRole('navigation', { name: 'Main' });
    expect(await main.getByRole('link', { name: 'Try a design' }).count()).toBe(may.tryDesign ? 1 : 0);
    expect(await main.getByRole('link', { name: 'Users' }).count()).toBe(may.users ? 1 : 0);
    expect(await page.getByRole('button', { name: /main: Watch/ }).count()).toBe(may.watch ? 1 : 0);
    if (may.watch) {
      // Watching is a toggle kept by the server: on, then off again.
      const row = page.locator('tr[data-branch="feature/ddc-reorder"]');
      const button = row.getByRole('button', { name: /Watch/ });
      const was = await button.getAttribute('aria-pressed');
      await button.click();
      await row.locator(`button[aria-pressed="${was === 'true' ? 'false' : 'true'}"]`).waitFor();
      await button.click();
      await row.locator(`button[aria-pressed="${was}"]`).waitFor();
    }

    await project.getByRole('link', { name: 'Rules' }).click();
    await page.getByRole('heading', { name: 'Team rules' }).waitFor();
    await page.getByTestId('rule-history').waitFor();
    // The rules and their history load apart: wait for what this role is offered, then count.
    if (may.rules) await page.getByRole('button', { name: 'Save the rules' }).waitFor();
    else await page.getByText('Only a lead of this project changes the team rules.').waitFor();
    expect(await page.getByRole('button', { name: 'Save the rules' }).count()).toBe(may.rules ? 1 : 0);
  });

  it('gets a plain refusal on the pages of other roles, and the server refuses their requests', async () => {
    const { page } = s;
    if (!may.tokens) {
      await page.goto(`${web.url}/projects/${slug}/tokens`);
      await page.getByText('Your role does not include this page').waitFor();
    }
    if (!may.users) {
      await page.goto(`${web.url}/admin/users`);
      await page.getByText('Your role does not include this page').waitFor();
    }
    // The server's answers, whatever the pages show.
    expect(await statusOf(s, 'GET', `/api/projects/${slug}/tokens`)).toBe(may.tokens ? 200 : 403);
    expect(await statusOf(s, 'GET', `/api/projects/${slug}/members`)).toBe(may.members ? 200 : 403);
    expect(await statusOf(s, 'GET', '/api/users')).toBe(may.users ? 200 : 403);
    expect(await statusOf(s, 'GET', `/api/projects/${slug}/rules`)).toBe(200);
    if (!may.rules) expect(await statusOf(s, 'PUT', `/api/projects/${slug}/rules`, { rules: { max_registers: 1 } })).toBe(403);
    if (!may.watch) expect(await statusOf(s, 'PUT', `/api/projects/${slug}/branches/main/watch`)).toBe(403);
    // An empty job request: refused for its role (403) before its body is read, else for its body (400).
    expect(await statusOf(s, 'POST', `/api/projects/${slug}/jobs`, {})).toBe(may.tryDesign ? 400 : 403);
    expect(s.errors).toEqual([]);
  });

  it('signs out, after which the pages send it to sign-in', async () => {
    const { page } = s;
    await page.goto(`${web.url}/`);
    await page.getByRole('link', { name: 'Sign out' }).click();
    await page.getByRole('heading', { name: 'You are signed out' }).waitFor();
    await page.goto(`${web.url}/projects/${slug}`);
    await page.waitForURL('**/signin?next=*');
    expect(await statusOf(s, 'GET', '/api/auth/me')).toBe(401);
  });
});

describe('an invitation', () => {
  it('is sent by a lead from the members page and accepted through the link in the e-mail', async () => {
    const { page } = s;
    s.errors.length = 0;
    const a = demoAccount('lead');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/projects/${demoProject.slug}/members`);
    const email = `new-engineer-${Date.now()}@example.com`;
    await page.getByLabel('E-mail').fill(email);
    await page.getByLabel(/^Engineer/).check();
    await page.getByRole('button', { name: 'Add' }).click();
    await page.getByText(`An invitation went to ${email}.`).waitFor();
    await page.getByText(email).nth(1).waitFor(); // listed under pending invitations
    const pending = page.getByRole('region', { name: 'Pending invitations' }).locator('li').filter({ hasText: email });
    expect(await pending.textContent()).toMatch(/as engineer.*sent .*expires/);
    await page.goto(`${web.url}/signout`);
    await page.getByRole('heading', { name: 'You are signed out' }).waitFor();

    // The fake SMTP server caught the mail; the link in it is the only way in.
    const link = await vi.waitFor(
      () => {
        const mail = web.smtp.messages.find((m) => m.to.includes(email));
        const found = mail?.raw.replace(/=\r?\n/g, '').match(/https?:\/\/[^\s"<>]+\/invitations\/[A-Za-z0-9_-]+/)?.[0];
        expect(found, 'invitation e-mail with a link').toBeTruthy();
        return found!;
      },
      { timeout: 10_000, interval: 100 },
    );
    await page.goto(link);
    await page.getByText(`${email} is invited to be engineer in ${demoProject.name}`).waitFor();
    await page.getByLabel('Your name').fill('Nia New');
    await page.getByLabel('Choose a password').fill('a long enough password');
    await page.getByLabel('The same password again').fill('a long enough password');
    await page.getByRole('button', { name: 'Create my account' }).click();
    await page.getByRole('button', { name: `Open ${demoProject.name}` }).click();
    await page.getByTestId('current-role').filter({ hasText: 'Engineer' }).waitFor();
    expect(s.errors).toEqual([]);
  });
});

describe('a branch history', () => {
  it('pages through the runs by cursor and filters them by design', async () => {
    const { page } = s;
    s.errors.length = 0;
    const a = demoAccount('viewer');
    await signIn(page, web.url, a.email, a.password);
    const slug = demoProject.slug;
    // What the server holds, asked by the same page: every run of main, newest first.
    const all = await page.evaluate(async (slug) => (await (await fetch(`/api/projects/${slug}/branches/main/runs?limit=200`)).json()).runs as { commit: string; designs: { name: string }[] }[], slug);
    expect(all.length).toBeGreaterThan(15); // the demo has more runs on main than one page holds
    await page.goto(`${web.url}/projects/${slug}/branches/main`);
    const rows = page.getByTestId('runs-table').locator('tbody tr');
    await rows.first().waitFor();
    const seen: string[] = [];
    for (;;) {
      await page.locator('[aria-busy="false"] > [data-testid=runs-table]').waitFor();
      seen.push(...(await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-commit')!))));
      const older = page.getByRole('button', { name: 'Older →' });
      if (await older.isDisabled()) break;
      const first = await rows.first().getAttribute('data-commit');
      await older.click();
      await page.waitForFunction((c) => document.querySelector('[data-testid=runs-table] tbody tr')?.getAttribute('data-commit') !== c, first);
    }
    expect(seen).toEqual(all.map((r) => r.commit));
    await page.getByRole('button', { name: '← Newer' }).click();
    await page.getByText('Page ' + (Math.ceil(all.length / 15) - 1), { exact: true }).waitFor();

    // Filtered by one design, the table holds exactly the runs that have it.
    const name = all[0].designs[0].name;
    await page.getByLabel('Design', { exact: true }).selectOption(name);
    await page.waitForURL(`**/branches/main?design=${encodeURIComponent(name)}`);
    await page.getByText(`History of the branch, newest run first, for the design ${name}.`).waitFor();
    const expected = all.filter((r) => r.designs.some((d) => d.name === name)).slice(0, 15).map((r) => r.commit);
    await page.waitForFunction((n) => document.querySelectorAll('[data-testid=runs-table] tbody tr').length === n, expected.length);
    expect(await rows.evaluateAll((trs) => trs.map((tr) => tr.getAttribute('data-commit')))).toEqual(expected);
    expect(s.errors).toEqual([]);
  });
});

describe('error and empty states', () => {
  it('says so plainly for a project or run that does not exist, and for an unknown address', async () => {
    const { page } = s;
    s.errors.length = 0;
    const a = demoAccount('engineer');
    await signIn(page, web.url, a.email, a.password);
    await page.goto(`${web.url}/projects/no-such-project`);
    await page.getByRole('alert').getByText('Not found').waitFor();
    await page.goto(`${web.url}/projects/${demoProject.slug}/runs/987654321`);
    await page.getByRole('alert').getByText('No such run.').waitFor();
    await page.goto(`${web.url}/projects/${demoProject.slug}/branches/no-such-branch`);
    await page.getByText('No run on this branch').waitFor();
    await page.goto(`${web.url}/nowhere/at/all`);
    await page.getByText('There is no page at this address').waitFor();
    expect(s.errors).toEqual([]);
  });
});
