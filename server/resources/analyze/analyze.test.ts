// Trying a design in the browser: the server must return what the CLI writes for the same file.
// The reference is the `pleat` CLI itself, run as a separate process on the same file.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { addMember, cookieFor, makeMember, makeProject } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';

const root = new URL('../../../', import.meta.url).pathname;
const FILE = 'equaliser-retimed.fold.yaml';
const text = readFileSync(join(root, 'examples', FILE));

let t: TestServer;
let project: Project;
let engineer: User;

beforeAll(async () => {
  t = await startTestServer();
  project = await makeProject(t.ctx);
  engineer = await makeMember(t.ctx, project, 'engineer');
});
afterAll(async () => t?.close());

const analyze = (body: Buffer | null, fields: Record<string, string> = {}, who = engineer) => {
  let req = t.http().post('/api/analyze').set('Cookie', cookieFor(t.ctx, who));
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return body ? req.attach('design', body, FILE) : req;
};

/** `pleat check FILE --format json` in a folder without a config, as a user would run it. */
function cliReport(file: string, content: Buffer): { designs: unknown[] } {
  const dir = mkdtempSync(join(tmpdir(), 'pleat-analyze-'));
  try {
    writeFileSync(join(dir, file), content);
    // From source, so the CLI and this server run the very same engine files (a stale dist/ could differ).
    const args = [join(root, 'cli/main.ts'), 'check', file, '--format', 'json'];
    let out: string;
    try {
      out = execFileSync(join(root, 'node_modules/.bin/tsx'), args, { cwd: dir, encoding: 'utf8', env: { ...process.env, NO_COLOR: '1' } });
    } catch (e) {
      out = (e as { stdout: string }).stdout; // exit 1 or 2 still prints the report
    }
    return JSON.parse(out);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

describe('POST /api/analyze', () => {
  it('returns the same design report as the CLI for the same file', async () => {
    const res = await analyze(text);
    expect(res.status).toBe(200);
    const cli = cliReport(FILE, text);
    expect(res.body.design).toEqual(cli.designs[0]);
    expect(res.body.design.status).toBe('pass');
  });

  it('reports an invalid file as status error with line and column, not as a failed request', async () => {
    const broken = Buffer.from(text.toString('utf8').replace(/factor: \d+/, 'factor: many'));
    const res = await analyze(broken);
    expect(res.status).toBe(200);
    expect(res.body.design.status).toBe('error');
    const d = res.body.design.diagnostics.find((x: { severity: string }) => x.severity === 'error');
    expect(d.line).toBeGreaterThan(1);
    expect(d.column).toBeGreaterThan(0);
    expect(res.body.design).toEqual(cliReport(FILE, broken).designs[0]);
  });

  it('applies the team rules of the project named in the form', async () => {
    await t.ctx.db.models.TeamRules.update({ rules: { min_utilization: 0.999 } }, { where: { projectId: project.id } });
    const res = await analyze(text, { project: project.slug });
    expect(res.status).toBe(200);
    expect(res.body.design.status).toBe('fail');
    expect(res.body.design.violations[0]).toMatchObject({ rule: 'min_utilization', source: 'team', limit: 0.999 });
    expect(res.body.rules.min_utilization).toEqual({ value: 0.999, source: 'team' });
  });

  it('refuses a viewer of the named project even if they engineer elsewhere', async () => {
    const other = await makeProject(t.ctx);
    await addMember(t.ctx, other, engineer, 'viewer');
    expect((await analyze(text, { project: other.slug })).status).toBe(403);
  });

  it('asks for the file, and refuses one over 16 MiB with 413', async () => {
    const none = await analyze(null, { project: project.slug });
    expect(none.status).toBe(400);
    const big = Buffer.alloc(16 * 1024 * 1024 + 1, 0x20);
    const res = await analyze(big);
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('too-large');
  });
});
