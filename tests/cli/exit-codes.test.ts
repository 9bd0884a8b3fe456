// Exit codes of the built CLI as a process. The contract is the exit-code table of the project's
// CLI specification (docs/cli.md): 0 pass, 1 a rule broken, 2 invalid input (wins over 1).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import path from 'node:path';
import { load as loadYaml } from 'js-yaml';
import { cleanupTemps, ensureBuilt, failingDesign, invalidDesign, passingDesign, pleat, tempDir, write } from './helpers';

const STACK = /\n\s+at .+\(.+:\d+:\d+\)|\bat file:\/\/|node:internal/;

let dir: string;
beforeAll(async () => {
  await ensureBuilt();
  dir = tempDir();
  write(dir, 'pass.fold.yaml', passingDesign());
  write(dir, 'fail.fold.yaml', failingDesign());
  write(dir, 'invalid.fold.yaml', invalidDesign());
});
afterAll(cleanupTemps);

describe('pleat check exit codes', () => {
  it('exits 0 when every design is valid and passes', async () => {
    const r = await pleat(['check', 'pass.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(0);
    expect(r.stdout).toMatch(/^design smoke-pass  N=2  folds$/m);
  });

  it('exits 1 when a rule is broken', async () => {
    const r = await pleat(['check', 'fail.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(1);
    expect(r.stdout).toMatch(/^design smoke-fail  N=2  breaks negative_delays$/m);
    expect(r.stdout).toContain('negative_delays');
  });

  it('exits 2 for an invalid design and names file, line and column', async () => {
    const r = await pleat(['check', 'invalid.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    // The edge `{ from: ghost, ... }` is on line 9; its value starts at column 13.
    expect(r.stdout).toContain('invalid.fold.yaml:9:13: error unknown-node:');
  });

  it('lets 2 win over 1 when both kinds of problem are present', async () => {
    const r = await pleat(['check', 'fail.fold.yaml', 'invalid.fold.yaml', 'pass.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stdout).toMatch(/^gate invalid: 1 design invalid \(smoke-invalid\); smoke-fail breaks negative_delays; 1 of 3 designs fold$/m);
  });

  it('exits 2 for YAML that does not parse, with its position', async () => {
    write(dir, 'broken/bad-yaml.fold.yaml', 'format: pleat/1\nname: [unclosed\nunits: []\n');
    const r = await pleat(['check', 'broken/bad-yaml.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stdout).toMatch(/bad-yaml\.fold\.yaml:\d+:\d+: error yaml-syntax:/);
  });

  it('exits 2 for an unknown option, with a one-line message and no stack trace', async () => {
    const r = await pleat(['check', '--frobnicate'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat: unknown option '--frobnicate'/);
    expect(r.stderr).not.toMatch(STACK);
  });

  it('exits 2 for a format that does not exist', async () => {
    const r = await pleat(['check', 'pass.fold.yaml', '--format', 'xml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toContain('xml');
    expect(r.stderr).toMatch(/text, json, junit, github/);
  });

  it('exits 2 for an unknown command and for no command at all', async () => {
    const unknown = await pleat(['chekc'], { cwd: dir });
    expect(unknown.exitCode).toBe(2);
    expect(unknown.stderr).toMatch(/pleat: unknown command 'chekc'/);
    expect(unknown.stderr).toMatch(/check/); // the suggestion
    const none = await pleat([], { cwd: dir });
    expect(none.exitCode).toBe(2);
    expect(none.stderr + none.stdout).toMatch(/Usage: pleat/);
  });

  it('exits 2 for a path that does not exist', async () => {
    const r = await pleat(['check', 'nowhere.fold.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toContain('pleat: no such file or folder: nowhere.fold.yaml');
    expect(r.stderr).not.toMatch(STACK);
  });

  it('finds *.fold.json designs in a folder beside *.fold.yaml, and places JSON syntax errors (docs/format.md)', async () => {
    const d = tempDir();
    write(d, 'hw/a.fold.yaml', passingDesign('from-yaml'));
    const r0 = await pleat(['check', path.join(d, 'hw/a.fold.yaml'), '--format', 'json'], { cwd: d });
    const data = JSON.parse(r0.stdout) as { designs: { name: string }[] };
    expect(data.designs[0].name).toBe('from-yaml');
    // The same design written as JSON (by js-yaml's reading of the YAML, an independent parser).
    write(d, 'hw/b.fold.json', JSON.stringify({ ...(loadYaml(passingDesign('from-json')) as object) }, null, 2));
    const r = await pleat(['check', 'hw', '--format', 'json'], { cwd: d });
    expect(r.exitCode).toBe(0);
    expect((JSON.parse(r.stdout) as { designs: { name: string }[] }).designs.map((x) => x.name).sort()).toEqual(['from-json', 'from-yaml']);
    // RFC 8259 has no trailing commas: the error is at the closing brace of line 3.
    write(d, 'hw/c.fold.json', '{\n  "format": "pleat/1",\n}\n');
    const bad = await pleat(['check', 'hw'], { cwd: d });
    expect(bad.exitCode).toBe(2);
    expect(bad.stdout + bad.stderr).toMatch(/c\.fold\.json:3:1\b.*json-syntax/);
    expect(bad.stderr).not.toMatch(STACK);
  });

  it('exits 2 when there is nothing to check', async () => {
    const empty = tempDir();
    const r = await pleat(['check'], { cwd: empty });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/nothing to check/);
  });

  it('exits 2 for a bad config, with file:line:col', async () => {
    const d = tempDir();
    write(d, 'a.fold.yaml', passingDesign());
    write(d, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nrules:\n  min_utilization: 1.5\n  max_registrs: 10\n');
    const r = await pleat(['check'], { cwd: d });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toContain('pleat.config.yaml:3:20: error config-rule: min_utilization must be a number from 0 to 1');
    expect(r.stderr).toContain('pleat.config.yaml:4:3: error config-rule: unknown rule "max_registrs"; did you mean "max_registers"?');
    expect(r.stderr).not.toMatch(STACK);
  });

  it('exits 2 for a config file named by --config that does not exist', async () => {
    const r = await pleat(['check', 'pass.fold.yaml', '--config', 'missing.yaml'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toContain('config file not found: missing.yaml');
  });

  it('prints help and the version with exit 0', async () => {
    const v = await pleat(['--version']);
    expect(v.exitCode).toBe(0);
    expect(v.stdout.trim()).toMatch(/^\d+\.\d+\.\d+/);
    const h = await pleat(['check', '--help']);
    expect(h.exitCode).toBe(0);
    expect(h.stdout).toContain('--format <format>');
  });
});
