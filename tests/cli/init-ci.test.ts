// `pleat init --ci <host>` and `pleat init --hook`. The CI files are read back with the yaml
// package and checked for the keys each host documents (GitHub Actions workflow syntax:
// on/jobs/steps/uses/with/env, secrets.NAME; GitLab CI: script, variables, artifacts:paths,
// artifacts:reports:codequality; from memory). The hook runs in a real temporary git repository.
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { execa } from 'execa';
import { parse } from 'yaml';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, failingDesign, invalidDesign, passingDesign, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt);
afterAll(cleanupTemps);

async function gitRepo(): Promise<string> {
  const d = tempDir();
  await execa('git', ['init', '-q', '-b', 'main'], { cwd: d });
  await execa('git', ['config', 'user.email', 'dev@example.invalid'], { cwd: d });
  await execa('git', ['config', 'user.name', 'Dev'], { cwd: d });
  await execa('git', ['config', 'commit.gpgsign', 'false'], { cwd: d });
  return d;
}

// Git sends a hook's standard output to its standard error (githooks(5)): read both together.
const git = async (cwd: string, args: string[]) => {
  const r = await execa('git', args, { cwd, reject: false, all: true });
  return { exitCode: r.exitCode, all: String(r.all) };
};

describe('pleat init --ci', () => {
  it('github: a workflow at the repository root that checks, uploads with the secret and keeps the report', async () => {
    const d = await gitRepo();
    const sub = path.join(d, 'hw');
    write(sub, '.keep', '');
    const r = await pleat(['init', '--ci', 'github'], { cwd: sub });
    expect(r.exitCode, r.stderr).toBe(0);
    expect(r.stdout).toContain('wrote ../.github/workflows/pleat.yml (GitHub Actions)');
    const wf = parse(readFileSync(path.join(d, '.github/workflows/pleat.yml'), 'utf8'));
    expect(Object.keys(wf.on)).toEqual(['push', 'pull_request']);
    const steps = wf.jobs['folding-gate'].steps as { uses?: string; run?: string; env?: Record<string, string>; with?: Record<string, unknown>; if?: string }[];
    expect(steps[0]).toMatchObject({ uses: 'actions/checkout@v4', with: { 'fetch-depth': 0 } });
    const check = steps.find((s) => s.run?.includes('pleat check'))!;
    expect(check.run).toContain('--upload');
    expect(check.env).toEqual({ PLEAT_TOKEN: '${{ secrets.PLEAT_TOKEN }}' });
    const keep = steps.find((s) => s.uses?.startsWith('actions/upload-artifact'))!;
    expect(keep).toMatchObject({ if: 'always()', with: { path: '.pleat/report.json' } });
    // Written once; a second time only with --force.
    expect((await pleat(['init', '--ci', 'github'], { cwd: d })).exitCode).toBe(2);
    expect((await pleat(['init', '--ci', 'github', '--force'], { cwd: d })).exitCode).toBe(0);
  });

  it('gitlab: a job with the token from a CI/CD variable, the report as artifact and code quality', async () => {
    const d = await gitRepo();
    const r = await pleat(['init', '--ci', 'gitlab'], { cwd: d });
    expect(r.exitCode, r.stderr).toBe(0);
    const ci = parse(readFileSync(path.join(d, '.gitlab-ci.yml'), 'utf8'));
    const job = ci.pleat;
    expect(job.script.join('\n')).toMatch(/npx pleat check --upload --format gitlab --output pleat-code-quality\.json/);
    expect(job.artifacts).toEqual({ when: 'always', paths: ['.pleat/report.json'], reports: { codequality: 'pleat-code-quality.json' } });
    expect(job.variables.GIT_DEPTH).toBe('0');
    // No token in the file: it comes from the CI's variables at run time.
    expect(readFileSync(path.join(d, '.gitlab-ci.yml'), 'utf8')).not.toMatch(/PLEAT_TOKEN\s*:/);
  });

  it('an unknown host is a command-line error', async () => {
    const r = await pleat(['init', '--ci', 'nowhere'], { cwd: tempDir() });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat: option '--ci <host>' argument 'nowhere' is invalid\. Allowed choices are github, gitlab\./);
  });
});

describe('pleat init --hook', () => {
  it('checks the staged design files only, as staged', async () => {
    const d = await gitRepo();
    write(d, 'pleat.config.yaml', 'designs: ["**/*.fold.yaml"]\n');
    write(d, 'hw/ok.fold.yaml', passingDesign());
    const r = await pleat(['init', '--hook'], { cwd: d });
    expect(r.exitCode, r.stderr).toBe(0);
    const hook = path.join(d, '.git/hooks/pre-commit');
    expect(existsSync(hook)).toBe(true);
    expect(statSync(hook).mode & 0o111).not.toBe(0);

    await git(d, ['add', 'pleat.config.yaml', 'hw/ok.fold.yaml']);
    const first = await git(d, ['commit', '-q', '-m', 'a design that folds']);
    expect(first.exitCode, first.all).toBe(0);
    expect(first.all).toMatch(/^design smoke-pass  N=2  folds$/m);

    // A broken design in the working tree only, not staged: not checked, the commit goes ahead.
    write(d, 'hw/draft.fold.yaml', invalidDesign());
    write(d, 'notes.txt', 'x\n');
    await git(d, ['add', 'notes.txt']);
    const unstaged = await git(d, ['commit', '-q', '-m', 'notes']);
    expect(unstaged.exitCode, unstaged.all).toBe(0);

    // A staged design that breaks a rule stops the commit, and only it is checked.
    write(d, 'hw/loop.fold.yaml', failingDesign());
    await git(d, ['add', 'hw/loop.fold.yaml']);
    const stopped = await git(d, ['commit', '-q', '-m', 'a loop that does not fold']);
    expect(stopped.exitCode).not.toBe(0);
    expect(stopped.all).toMatch(/^design smoke-fail  N=2  breaks negative_delays$/m);
    expect(stopped.all).toContain('hw/loop.fold.yaml');
    expect(stopped.all).not.toContain('smoke-invalid');
    expect(stopped.all).toMatch(/pleat: commit stopped: the staged designs above do not pass \(exit 1\)/);

    // What is staged counts, not the working copy: a fixed file staged, then broken again unstaged.
    write(d, 'hw/loop.fold.yaml', passingDesign('loop-fixed'));
    await git(d, ['add', 'hw/loop.fold.yaml']);
    write(d, 'hw/loop.fold.yaml', failingDesign());
    const staged = await git(d, ['commit', '-q', '-m', 'the loop fixed']);
    expect(staged.exitCode, staged.all).toBe(0);
    expect(staged.all).toMatch(/^design loop-fixed  N=2  folds$/m);
  });

  it('needs a git repository, and keeps an existing hook unless --force', async () => {
    const none = await pleat(['init', '--hook'], { cwd: tempDir() });
    expect(none.exitCode).toBe(2);
    expect(none.stderr).toMatch(/^pleat: --hook needs a git repository/);
    const d = await gitRepo();
    write(d, '.git/hooks/pre-commit', '#!/bin/sh\nexit 0\n');
    const again = await pleat(['init', '--hook'], { cwd: d });
    expect(again.exitCode).toBe(2);
    expect(readFileSync(path.join(d, '.git/hooks/pre-commit'), 'utf8')).toBe('#!/bin/sh\nexit 0\n');
  });
});
