// `pleat schema` and `pleat init` as a user runs them, and the schema validator that the build
// precompiles: it must judge files exactly as the engine does with ajv at run time.
import { readFileSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { Ajv } from 'ajv';
import { load } from 'js-yaml';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { EXAMPLES, cleanupTemps, ensureBuilt, pleat, tempDir, write } from './helpers';

beforeAll(ensureBuilt);
afterAll(cleanupTemps);

describe('pleat schema', () => {
  it('prints a JSON Schema that ajv compiles and that accepts every example', async () => {
    const r = await pleat(['schema']);
    expect(r.exitCode).toBe(0);
    const schema = JSON.parse(r.stdout);
    expect(schema.$schema).toMatch(/json-schema\.org/);
    // ajv (registry library) validates the schema against its meta-schema while compiling.
    const validate = new Ajv({ allErrors: true }).compile(schema);
    const files = readdirSync(EXAMPLES).filter((f) => f.endsWith('.fold.yaml'));
    expect(files.length).toBeGreaterThanOrEqual(6);
    for (const f of files) {
      const doc = load(readFileSync(path.join(EXAMPLES, f), 'utf8'));
      expect(validate(doc), `${f}: ${JSON.stringify(validate.errors)}`).toBe(true);
    }
    expect(validate({ format: 'pleat/1', name: 'x' })).toBe(false);
  });
});

describe('the precompiled schema validator of the built CLI', () => {
  const broken: Record<string, string> = {
    'types.fold.yaml': 'format: pleat/1\nname: bad name!\nunits: 3\nnodes: []\nedges: []\nfolding: { factor: 0, sets: {} }\nextra: 1\n',
    'nested.fold.yaml':
      'format: pleat/2\nname: n\nkinds: { add: { time: -1 } }\nunits:\n  - { id: A, kind: add, stages: 1.5 }\nnodes:\n  - { id: x, kind: input, slot: "0" }\nedges:\n  - { from: x, to: x, delays: -1, colour: red }\nfolding: { factor: 2, sets: { A: [1] }, latency: sometimes }\n',
  };

  it('gives the same diagnostics as the engine with ajv compiling at run time', async () => {
    const d = tempDir();
    for (const [f, text] of Object.entries(broken)) write(d, f, text);
    const r = await pleat(['check', '.', '--format', 'json'], { cwd: d });
    expect(r.exitCode).toBe(2);
    const report = JSON.parse(r.stdout);
    for (const design of report.designs) {
      const inProcess = loadDesign(broken[design.file]).diagnostics;
      expect(inProcess.length).toBeGreaterThan(0);
      const strip = (x: { code: string; line: number | null; column: number | null; message: string }) => [x.code, x.line, x.column, x.message];
      expect(design.diagnostics.map(strip)).toEqual(inProcess.map(strip));
    }
  });
});

describe('pleat init', () => {
  it('writes a config and an example design that then pass `pleat check`', async () => {
    const d = tempDir();
    const r = await pleat(['init'], { cwd: d });
    expect(r.exitCode).toBe(0);
    expect(r.stdout).toContain('wrote pleat.config.yaml');
    expect(r.stdout).toContain('wrote designs/starter.fold.yaml');
    const check = await pleat(['check', '--format', 'json'], { cwd: d });
    expect(check.exitCode).toBe(0);
    const report = JSON.parse(check.stdout);
    expect(report.designs.map((x: { file: string; status: string }) => [x.file, x.status])).toEqual([['designs/starter.fold.yaml', 'pass']]);
    expect(report.designs[0].diagnostics).toEqual([]);
  });

  it('refuses to overwrite, unless --force', async () => {
    const d = tempDir();
    write(d, 'pleat.config.yaml', '# mine\n');
    const r = await pleat(['init'], { cwd: d });
    expect(r.exitCode).toBe(2);
    expect(r.stderr).toMatch(/^pleat: pleat\.config\.yaml already exists; nothing was written \(use --force to overwrite\)/);
    expect(readFileSync(path.join(d, 'pleat.config.yaml'), 'utf8')).toBe('# mine\n');
    expect(readdirSync(d)).toEqual(['pleat.config.yaml']);
    const forced = await pleat(['init', '--force'], { cwd: d });
    expect(forced.exitCode).toBe(0);
    expect(readFileSync(path.join(d, 'pleat.config.yaml'), 'utf8')).toContain('designs:');
  });
});
