// `pleat check --upload --hardware-summary FILE`, the built CLI as a process against the real
// server and PostgreSQL: the summary, written by hand from the fields of
// shared/report/hardwareSummary.ts (no Yosys needed), reaches the branch history as
// designs[].hardware of its design.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { HARDWARE_SUMMARY_FORMAT, HARDWARE_SUMMARY_VERSION, hardwareSummaryProblem } from '../../shared/report/hardwareSummary';
import type { Project } from '../../server/db/models';
import { cookieFor, makeMember } from '../../server/test/factories';
import {
  cleanupTemps, ensureBuilt, passingDesign, projectWithToken, randomCommit, run, runsOf, startLiveServer, tempDir, write, type LiveServer,
} from './helpers';

let s: LiveServer;
let project: Project;
let slug: string;
let token: string;
let repo: string;

// Invented figures of a small folded datapath (N = 3) against its parallel reference.
const summary = {
  format: HARDWARE_SUMMARY_FORMAT,
  version: HARDWARE_SUMMARY_VERSION,
  design: 'kiln-smooth',
  file: 'hw/kiln.fold.yaml',
  top: 'kiln_smooth',
  tool: 'Yosys 0.38',
  compared: { stages: 'folded', multipliers: 'general', width: 12, coefFrac: 10 },
  folded: { cells: 917, flipFlops: 41, depth: 29, factor: 3 },
  parallel: { cells: 2604, flipFlops: 60, depth: 26, factor: 1 },
};

beforeAll(async () => {
  await ensureBuilt();
  s = await startLiveServer();
  const p = await projectWithToken(s.ctx);
  project = p.project;
  slug = p.project.slug;
  token = p.token;
  repo = tempDir('pleat-hardware-');
  write(repo, 'pleat.config.yaml', `designs: ["hw/*.fold.yaml"]\nserver:\n  url: ${s.url}\n  project: ${slug}\n`);
  write(repo, 'hw/kiln.fold.yaml', passingDesign('kiln-smooth'));
  write(repo, 'build/kiln_smooth.hardware.json', JSON.stringify(summary, null, 2) + '\n');
});
afterAll(async () => {
  await s?.close();
  cleanupTemps();
});

describe('check --upload --hardware-summary', () => {
  it('puts the summary on its design in the branch history', async () => {
    expect(hardwareSummaryProblem(summary)).toBeNull(); // the hand-written file is a valid one
    const commit = randomCommit();
    const env = { PLEAT_TOKEN: token, PLEAT_BRANCH: 'main', PLEAT_COMMIT: commit };
    const r = await run(['check', '--upload', '--hardware-summary', 'build/kiln_smooth.hardware.json'], repo, env);
    expect(r.stderr).toMatch(/pleat: uploaded: run \d+ of proj-/);
    expect(r.exitCode).toBe(0);
    expect(await runsOf(s.db, commit)).toHaveLength(1);

    // Read back as the web branch page does: the history over the API, as a project member.
    const cookie = cookieFor(s.ctx, await makeMember(s.ctx, project, 'viewer'));
    const res = await fetch(`${s.url}/api/projects/${slug}/branches/main/runs`, { headers: { Cookie: cookie } });
    expect(res.status).toBe(200);
    const body = (await res.json()) as { runs: { commit: string; designs: { name: string; hardware: unknown }[] }[] };
    const mine = body.runs.find((x) => x.commit === commit)!;
    expect(mine.designs).toEqual([
      expect.objectContaining({
        name: 'kiln-smooth',
        hardware: { version: 1, folded: summary.folded, parallel: summary.parallel },
      }),
    ]);
  });
});
