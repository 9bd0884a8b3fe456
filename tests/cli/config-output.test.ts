// Config discovery, repository rules, --output and colour, through the built CLI.
import { execFileSync } from 'node:child_process';
import { chmodSync, existsSync, readFileSync, symlinkSync } from 'node:fs';
import { execa } from 'execa';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BIN, cleanupTemps, ensureBuilt, failingDesign, passingDesign, pleat, tempDir, write } from './helpers';

// ECMA-48 control sequence introducer, as terminals read colour codes.
const ANSI = /\u001b\[[0-9;]*m/;

beforeAll(ensureBuilt);
afterAll(cleanupTemps);

describe('config discovery', () => {
  it('finds pleat.config.yaml by walking up from a nested working directory', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: ["hw/**/*.fold.yaml"]\nrules:\n  min_utilization: 0.75\n');
    write(repo, 'hw/filters/smoke.fold.yaml', passingDesign());
    const nested = path.join(repo, 'hw/filters/deep');
    write(nested, '.keep', '');
    const r = await pleat(['check', '--format', 'json'], { cwd: nested });
    // 50% utilization against the repository's 75%: a broken rule, so exit 1.
    expect(r.exitCode).toBe(1);
    const report = JSON.parse(r.stdout);
    // Report paths are relative to the repository root (the config's folder).
    expect(report.designs[0].file).toBe('hw/filters/smoke.fold.yaml');
    expect(report.rules.min_utilization).toEqual({ value: 0.75, source: 'repository' });
    expect(report.rules.negative_delays).toEqual({ value: 'retime', source: 'default' });
    expect(report.designs[0].violations[0]).toMatchObject({ rule: 'min_utilization', source: 'repository', limit: 0.75, actual: 0.5 });
  });

  it('uses --config instead of discovery, and an explicit path instead of the globs', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'rules:\n  min_utilization: 0.9\n');
    write(repo, 'ci/strict.yaml', 'rules:\n  max_registers: 0\n');
    write(repo, 'one.fold.yaml', passingDesign());
    const r = await pleat(['check', 'one.fold.yaml', '--config', 'ci/strict.yaml', '--format', 'json'], { cwd: repo });
    const report = JSON.parse(r.stdout);
    expect(report.rules.min_utilization).toBeUndefined();
    expect(report.rules.max_registers).toEqual({ value: 0, source: 'repository' });
    expect(report.designs[0].violations.map((v: { rule: string }) => v.rule)).toEqual(['max_registers']);
    expect(r.exitCode).toBe(1);
  });

  it('reports a YAML error in the config with its position', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: ["*.fold.yaml"\nrules: {}\n');
    write(repo, 'a.fold.yaml', passingDesign());
    const r = await pleat(['check'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat\.config\.yaml:\d+:\d+: error config-syntax: /m);
  });

  it('refuses YAML aliases in the config, at the alias (a config has no use for them; YAML 1.2 aliases, common practice)', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: &d ["*.fold.yaml"]\nrules:\n  min_utilization: 0.5\nextra: *d\n');
    write(repo, 'a.fold.yaml', passingDesign());
    const r = await pleat(['check'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat\.config\.yaml:4:8: error config-syntax: .*aliases are not allowed/m);
  });

  it('refuses a token in the config file', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nserver:\n  url: http://127.0.0.1:4180\n  token: abc\n');
    write(repo, 'a.fold.yaml', passingDesign());
    const r = await pleat(['check'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toContain('pleat.config.yaml:4:3: error config-unknown-key: unknown key "server.token"; the token comes from the PLEAT_TOKEN environment variable');
  });

  it('expands folders recursively and skips node_modules', async () => {
    const repo = tempDir();
    write(repo, 'a/one.fold.yaml', passingDesign('one'));
    write(repo, 'a/b/two.fold.yaml', passingDesign('two'));
    write(repo, 'a/node_modules/pkg/three.fold.yaml', passingDesign('three'));
    write(repo, 'a/notes.yaml', 'not: a design\n');
    const r = await pleat(['check', 'a', '--format', 'json'], { cwd: repo });
    expect(r.exitCode).toBe(0);
    expect(JSON.parse(r.stdout).designs.map((d: { name: string }) => d.name).sort()).toEqual(['one', 'two']);
  });

  it('treats two designs with one name as an error on the second', async () => {
    const repo = tempDir();
    write(repo, 'a.fold.yaml', passingDesign('same'));
    write(repo, 'b.fold.yaml', passingDesign('same'));
    const r = await pleat(['check', 'a.fold.yaml', 'b.fold.yaml'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    expect(r.stdout).toContain('b.fold.yaml:2:7: error duplicate-design-name: design name "same" is already used by a.fold.yaml');
  });
});

describe('--output', () => {
  it('writes the chosen format to the file and keeps the text summary on the terminal', async () => {
    const repo = tempDir();
    write(repo, 'a.fold.yaml', passingDesign());
    write(repo, 'b.fold.yaml', failingDesign());
    const r = await pleat(['check', '.', '--format', 'json', '--output', 'reports/pleat.json'], { cwd: repo });
    expect(r.exitCode).toBe(1);
    const file = path.join(repo, 'reports/pleat.json');
    expect(existsSync(file)).toBe(true);
    const report = JSON.parse(readFileSync(file, 'utf8'));
    expect(report.verdict).toBe('fail');
    expect(r.stdout).toMatch(/^gate broken: smoke-fail breaks negative_delays; 1 of 2 designs fold$/m);
    expect(r.stdout).not.toContain('"format"');
  });

  it('writes text without colour codes even when colour is forced', async () => {
    const repo = tempDir();
    write(repo, 'b.fold.yaml', failingDesign());
    const r = await pleat(['check', '.', '--output', 'out.txt'], { cwd: repo, env: { FORCE_COLOR: '1' } });
    expect(r.stdout).toMatch(ANSI);
    expect(readFileSync(path.join(repo, 'out.txt'), 'utf8')).not.toMatch(ANSI);
  });

  it('exits 2 when the report cannot be written', async () => {
    const repo = tempDir();
    write(repo, 'a.fold.yaml', passingDesign());
    write(repo, 'blocker', 'a file where a folder should be');
    const r = await pleat(['check', '.', '--format', 'json', '--output', 'blocker/report.json'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat: cannot write the report to blocker\/report\.json/);
  });
});

describe('colour', () => {
  let repo: string;
  beforeAll(() => {
    repo = tempDir();
    write(repo, 'b.fold.yaml', failingDesign());
  });

  it('is off when stdout is not a terminal', async () => {
    const r = await pleat(['check', '.'], { cwd: repo });
    expect(r.stdout).not.toMatch(ANSI);
  });

  it('follows FORCE_COLOR, and --no-color beats it', async () => {
    expect((await pleat(['check', '.'], { cwd: repo, env: { FORCE_COLOR: '1' } })).stdout).toMatch(ANSI);
    expect((await pleat(['check', '.', '--no-color'], { cwd: repo, env: { FORCE_COLOR: '1' } })).stdout).not.toMatch(ANSI);
    expect((await pleat(['check', '.'], { cwd: repo, env: { FORCE_COLOR: '0' } })).stdout).not.toMatch(ANSI);
  });

  it('follows NO_COLOR (FORCE_COLOR, when also set, wins as in Node itself)', async () => {
    expect((await pleat(['check', '.'], { cwd: repo, env: { NO_COLOR: '1' } })).stdout).not.toMatch(ANSI);
    expect((await pleat(['check', '.'], { cwd: repo, env: { NO_COLOR: '1', FORCE_COLOR: '1' } })).stdout).toMatch(ANSI);
  });
});

describe('negative_delays: fail judges the plan as written', () => {
  // Our own fixture: a plan whose negative folded delays retiming can remove.
  const retimed = readFileSync(path.join(__dirname, '../sim/fixtures/smoothing-retimed.fold.yaml'), 'utf8');

  it('nothing is retimed: no `retimed` label, no register count, max_registers not judged on a retimed datapath', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nrules:\n  negative_delays: fail\n  max_registers: 1000\n');
    write(repo, 'smooth.fold.yaml', retimed);
    const text = await pleat(['check', '--no-color'], { cwd: repo });
    expect(text.exitCode).toBe(1);
    const verdict = text.stdout.split('\n').find((l) => l.startsWith('design pressure-smoothing'))!;
    expect(verdict).toMatch(/ breaks negative_delays$/);
    const figures = text.stdout.split('\n').find((l) => l.startsWith('  figures '))!;
    expect(figures).not.toMatch(/retimed/);
    expect(figures).toMatch(/regs -/);
    expect(text.stdout).not.toMatch(/^ {2}retiming /m);
    expect(text.stdout).toMatch(/not retimed \(negative_delays: fail\)/);

    const json = await pleat(['check', '--format', 'json'], { cwd: repo });
    const d = JSON.parse(json.stdout).designs[0];
    expect(d.retiming).toMatchObject({ needed: true, feasible: true, applied: false, values: {}, latencyAdded: 0 });
    expect(d.registers).toBeNull();
    expect(d.control ?? null).toBeNull();
    // Each edge shows the delays as written: nothing moved.
    for (const e of d.edges) expect([e.retimedDelays, e.retimedFoldedDelay]).toEqual([e.delays, e.foldedDelay]);
    expect(d.violations.map((v: { rule: string }) => v.rule)).toEqual(['negative_delays']);
    expect(d.diagnostics.map((w: { code: string; message: string }) => `${w.code}: ${w.message}`)).toContainEqual(
      expect.stringMatching(/max_registers not checked: the plan as written has negative folded delays and negative_delays: fail forbids retiming/),
    );
  });

  it('under retime the same plan is retimed and max_registers is judged', async () => {
    const repo = tempDir();
    write(repo, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nrules:\n  max_registers: 1000\n');
    write(repo, 'smooth.fold.yaml', retimed);
    const json = await pleat(['check', '--format', 'json'], { cwd: repo });
    expect(json.exitCode).toBe(0);
    const d = JSON.parse(json.stdout).designs[0];
    expect(d.retiming.applied).toBeUndefined();
    expect(d.registers.minimum).toBeGreaterThan(0);
  });
});

describe('folder and glob walks report what they cannot read (file-unreadable)', () => {
  function tree(): string {
    const repo = tempDir();
    write(repo, 'hw/good.fold.yaml', passingDesign('walk-good'));
    symlinkSync('missing.fold.yaml', path.join(repo, 'hw/broken.fold.yaml'));
    symlinkSync('loop-b.fold.yaml', path.join(repo, 'hw/loop-a.fold.yaml'));
    symlinkSync('loop-a.fold.yaml', path.join(repo, 'hw/loop-b.fold.yaml'));
    // A FIFO: the honest stand-in for an unreadable file while the tests run as root (reading
    // it would block for ever, so the walk must not read it).
    execFileSync('mkfifo', [path.join(repo, 'hw/pipe.fold.yaml')]);
    return repo;
  }

  it('broken links, link loops and named pipes are errors of their own: `check .` no longer passes', async () => {
    const repo = tree();
    const r = await pleat(['check', '.', '--format', 'json'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    const byFile = Object.fromEntries(JSON.parse(r.stdout).designs.map((d: { file: string; status: string; diagnostics: { code: string; message: string }[] }) => [d.file, d]));
    expect(byFile['hw/good.fold.yaml'].status).toBe('pass');
    for (const [f, why] of [
      ['hw/broken.fold.yaml', /broken symbolic link/],
      ['hw/loop-a.fold.yaml', /loop of symbolic links/],
      ['hw/loop-b.fold.yaml', /loop of symbolic links/],
      ['hw/pipe.fold.yaml', /named pipe/],
    ] as const) {
      expect(byFile[f]?.status, f).toBe('error');
      expect(byFile[f].diagnostics[0].code).toBe('file-unreadable');
      expect(byFile[f].diagnostics[0].message).toMatch(why);
    }
    // The config's globs walk the same way.
    write(repo, 'pleat.config.yaml', 'designs: ["hw/*.fold.yaml"]\n');
    const g = await pleat(['check', '--format', 'json'], { cwd: repo });
    expect(g.exitCode).toBe(2);
    expect(JSON.parse(g.stdout).designs.filter((d: { diagnostics: { code: string }[] }) => d.diagnostics.some((x) => x.code === 'file-unreadable'))).toHaveLength(4);
  });

  it('a link to a parent folder does not check a file twice or call it a duplicate', async () => {
    const repo = tempDir();
    write(repo, 'hw/one.fold.yaml', passingDesign('walk-one'));
    symlinkSync('..', path.join(repo, 'hw/up'));
    const r = await pleat(['check', '.', '--format', 'json'], { cwd: repo });
    expect(r.exitCode, r.stdout).toBe(0);
    expect(JSON.parse(r.stdout).designs.map((d: { file: string }) => d.file)).toEqual(['hw/one.fold.yaml']);
  });

  it('a folder that cannot be listed is an error (run as the unprivileged user nobody: root reads any folder)', async () => {
    const repo = tempDir();
    chmodSync(repo, 0o755);
    write(repo, 'good.fold.yaml', passingDesign('walk-visible'));
    write(repo, 'locked/hidden.fold.yaml', passingDesign('walk-hidden'));
    chmodSync(path.join(repo, 'locked'), 0o000);
    const asRoot = process.getuid?.() === 0;
    // Root ignores permissions, so the check runs as `nobody` through runuser (util-linux).
    const cmd = asRoot ? ['runuser', '-u', 'nobody', '--', process.execPath, BIN] : [process.execPath, BIN];
    const r = await execa(cmd[0], [...cmd.slice(1), 'check', '.', '--format', 'json'], { cwd: repo, reject: false });
    chmodSync(path.join(repo, 'locked'), 0o755);
    expect(r.exitCode, String(r.stderr)).toBe(2);
    const designs = JSON.parse(String(r.stdout)).designs;
    expect(designs.map((d: { file: string; status: string }) => `${d.file} ${d.status}`)).toEqual(['good.fold.yaml pass', 'locked error']);
    expect(designs[1].diagnostics[0]).toMatchObject({ code: 'file-unreadable', message: expect.stringMatching(/cannot read the folder \(permission denied\)/) });
  });
});
