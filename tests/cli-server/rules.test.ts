// Team rules as a floor, the built CLI as a process against the real server: a tighter team
// rule applies and is named 'team'; a looser repository rule does not loosen it; a tighter
// repository rule stays the repository's; the JSON report and the stored run carry the sources.
// Expected numbers: the smoothing design (tests/cli/helpers.ts passingDesign) puts one
// operation on each of two units over a folding factor of 2, so its utilization is 2/4 = 50%
// (hardware utilization efficiency: busy slots over available slots; common practice, no source).
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, closedPortUrl, ensureBuilt, passingDesign, projectWithToken, randomCommit, run, runsOf, startLiveServer, tempDir, write, type LiveServer } from './helpers';

let s: LiveServer;

beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

/** A repository with the smoothing design and these repository rules. */
function repoWith(slug: string, rules: string): string {
  const dir = tempDir('pleat-rules-');
  write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nrules:\n${rules}\nserver:\n  url: ${s.url}\n  project: ${slug}\n`);
  write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
  return dir;
}

describe('team rules from the server', () => {
  it('a tighter team rule applies, the output names it team, and a looser repository rule does not loosen it', async () => {
    const { project, token } = await projectWithToken(s.ctx, { min_utilization: 0.6, negative_delays: 'retime', max_registers: 100 });
    const dir = repoWith(project.slug, '  min_utilization: 0.4\n  negative_delays: warn\n  max_registers: 50');

    // Without the token the repository's own rules hold, and the design passes them.
    const alone = await run(['check'], dir);
    expect(alone.exitCode).toBe(0);
    expect(alone.stdout).toContain('min_utilization=0.4 (repository)');

    const r = await run(['check'], dir, { PLEAT_TOKEN: token });
    expect(r.exitCode).toBe(1);
    // The team floor (0.6) is above the design's 50%: it fails, and says whose rule it broke.
    expect(r.stdout).toMatch(/^design smooth\S*\s+N=\d+\s+breaks /m);
    expect(r.stdout).toMatch(/^ {2}broken {4}min_utilization=0\.6 \(team\) at smooth\.fold\.yaml:\d+:\d+: utilization 50% is below the minimum 60%$/m);
    expect(r.stdout).toContain('min_utilization=0.6 (team)');
    expect(r.stdout).toContain('negative_delays=retime (team)');
    // The repository's max_registers is tighter than the team's: it stays the repository's.
    expect(r.stdout).toContain('max_registers=50 (repository)');
    // The looser repository values are named on standard error.
    expect(r.stderr).toContain('repository rule min_utilization: 0.4 is looser than the team rule 0.6; the team rule applies');
    expect(r.stderr).toContain('repository rule negative_delays: warn is looser than the team rule retime; the team rule applies');
    expect(r.stdout + r.stderr).not.toContain(token);
  });

  it('the JSON report gives every rule with its source, and so does the stored run', async () => {
    const { project, token } = await projectWithToken(s.ctx, { min_unit_utilization: 0.25, max_registers: 100 });
    const dir = repoWith(project.slug, '  min_unit_utilization: 0.5\n  max_registers: 200');
    const commit = randomCommit();
    const r = await run(['check', '--format', 'json', '--output', 'out/report.json', '--upload'], dir, { PLEAT_TOKEN: token, PLEAT_BRANCH: 'main', PLEAT_COMMIT: commit });
    expect(r.exitCode).toBe(0);
    const report = JSON.parse(readFileSync(path.join(dir, 'out/report.json'), 'utf8'));
    expect(report.rules).toEqual({
      negative_delays: { value: 'retime', source: 'default' },
      min_unit_utilization: { value: 0.5, source: 'repository' }, // tighter than the team's 0.25
      max_registers: { value: 100, source: 'team' }, // the repository's 200 would loosen it
    });
    const [stored] = await runsOf(s.db, commit);
    expect(stored!.report.rules).toEqual(report.rules);
  });

  it('a team rule equal to the repository value is reported as team', async () => {
    const { project, token } = await projectWithToken(s.ctx, { min_utilization: 0.5 });
    const dir = repoWith(project.slug, '  min_utilization: 0.5');
    const r = await run(['check', '--format', 'json'], dir, { PLEAT_TOKEN: token });
    expect(r.exitCode).toBe(0); // 50% meets 0.5 (equal passes)
    expect(JSON.parse(r.stdout).rules.min_utilization).toEqual({ value: 0.5, source: 'team' });
  });

  it('when the server cannot be reached, warns and checks with the repository rules; the exit code is unchanged', async () => {
    const dir = tempDir('pleat-rules-down-');
    write(dir, 'pleat.config.yaml', `designs: ["*.fold.yaml"]\nrules:\n  min_utilization: 0.4\nserver:\n  url: ${await closedPortUrl()}\n  project: gone\n`);
    write(dir, 'smooth.fold.yaml', passingDesign('smooth'));
    const r = await run(['check'], dir, { PLEAT_TOKEN: 'pleat_ci_doesnotmatterhere0000000000000000000000' });
    expect(r.exitCode).toBe(0);
    expect(r.stderr).toMatch(/pleat: warning: team rules of project gone not fetched: cannot reach http:\/\/127\.0\.0\.1:\d+: connection refused \(ECONNREFUSED\) \(2 tries\); checking with the repository's rules only/);
    expect(r.stdout).toContain('min_utilization=0.4 (repository)');
  });

  it('with a wrong token, warns that the team rules were refused and goes on', async () => {
    const { project } = await projectWithToken(s.ctx, { min_utilization: 0.9 });
    const dir = repoWith(project.slug, '  min_utilization: 0.4');
    const wrong = 'pleat_ci_0000000000000000000000000000000000000000000';
    const r = await run(['check'], dir, { PLEAT_TOKEN: wrong });
    expect(r.exitCode).toBe(0);
    expect(r.stderr).toMatch(/team rules of project proj-[^ ]+ not fetched: HTTP 401 invalid-credentials: /);
    expect(r.stdout + r.stderr).not.toContain(wrong);
  });
});
