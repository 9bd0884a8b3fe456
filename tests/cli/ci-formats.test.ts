// The CI formats of `pleat check`: SARIF checked against the published SARIF 2.1.0 JSON Schema
// (tests/fixtures/sarif/README.md names its source) with ajv, the code-quality JSON against the
// fields GitLab documents for its Code Quality report, and the Markdown job summary.
import { execa } from 'execa';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import Ajv4 from 'ajv-draft-04';
import addFormats from 'ajv-formats';
import { Ajv } from 'ajv';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cleanupTemps, ensureBuilt, failingDesign, invalidDesign, passingDesign, pleat, tempDir, write } from './helpers';

let repo: string;
let outside: string;
beforeAll(async () => {
  await ensureBuilt();
  const top = tempDir();
  repo = path.join(top, 'repo');
  outside = path.join(top, 'elsewhere');
  write(repo, 'hw/a-pass.fold.yaml', passingDesign());
  write(repo, 'hw/b-fail.fold.yaml', failingDesign());
  write(repo, 'hw/c-invalid.fold.yaml', invalidDesign());
  write(outside, 'd-out.fold.yaml', failingDesign('smoke-outside'));
  await execa('git', ['init', '-q'], { cwd: repo });
});
afterAll(cleanupTemps);

const sarifSchema = JSON.parse(readFileSync(path.join(__dirname, '../fixtures/sarif/sarif-2.1.0-rtm.5.json'), 'utf8'));

interface SarifLog {
  version: string;
  runs: {
    tool: { driver: { name: string; rules: { id: string; shortDescription: { text: string }; help?: { text: string } }[] } };
    results: { ruleId: string; level: string; message: { text: string }; locations?: { physicalLocation: { artifactLocation: { uri: string }; region?: { startLine: number } } }[] }[];
  }[];
}

describe('--format sarif', () => {
  it('is valid SARIF 2.1.0 by the published schema, with a rule per code and per rule', async () => {
    const r = await pleat(['check', 'hw', '--format', 'sarif'], { cwd: repo });
    expect(r.exitCode).toBe(2);
    const log = JSON.parse(r.stdout) as SarifLog;
    // The OASIS SARIF 2.1.0 schema (draft-04), see tests/fixtures/sarif/README.md. One of its
    // patterns (the language tag) is not a valid regular expression in Unicode mode, so ajv
    // compiles the patterns without the `u` flag.
    // Its formats (uri, uri-reference, date-time) are checked too, by ajv-formats.
    const ajv = new Ajv4({ allErrors: true, strict: false, unicodeRegExp: false });
    addFormats(ajv as unknown as Parameters<typeof addFormats>[0]);
    const validate = ajv.compile(sarifSchema);
    expect(validate(log), JSON.stringify(validate.errors)).toBe(true);
    // The schema does reject what is not SARIF 2.1.0: another version, a result without message.
    expect(validate({ ...log, version: '2.0.0' })).toBe(false);
    expect(validate({ ...log, runs: [{ ...log.runs[0], results: [{ ruleId: 'x' }] }] })).toBe(false);
    expect(log.version).toBe('2.1.0');
    const run = log.runs[0];
    expect(run.tool.driver.name).toBe('pleat');
    const ids = run.tool.driver.rules.map((x) => x.id);
    expect(new Set(ids).size).toBe(ids.length);
    for (const id of ['rule/negative_delays', 'rule/min_utilization', 'rule/min_unit_utilization', 'rule/max_registers', 'unknown-node', 'yaml-syntax', 'zero-delay-loop']) expect(ids).toContain(id);
    for (const rule of run.tool.driver.rules) expect(rule.help?.text.length ?? 0).toBeGreaterThan(10);
    // The broken rule, at the edge m -> a (line 13 of the fixture), path from the work tree root, fixes in the text.
    const broken = run.results.find((x) => x.ruleId === 'rule/negative_delays')!;
    expect(broken.level).toBe('error');
    expect(broken.locations![0].physicalLocation.artifactLocation.uri).toBe('hw/b-fail.fold.yaml');
    expect(broken.locations![0].physicalLocation.region!.startLine).toBe(13);
    expect(broken.message.text).toMatch(/\nFix: Raise the folding factor to 3/);
    const invalid = run.results.find((x) => x.ruleId === 'unknown-node')!;
    expect(invalid.locations![0].physicalLocation.region!.startLine).toBe(9);
  });

  it('a design outside the work tree is said, never written as a ../ path', async () => {
    const r = await pleat(['check', 'hw/b-fail.fold.yaml', '../elsewhere/d-out.fold.yaml', '--format', 'sarif'], { cwd: repo });
    const log = JSON.parse(r.stdout) as SarifLog;
    expect(r.stdout).not.toContain('../');
    const out = log.runs[0].results.find((x) => x.message.text.startsWith('smoke-outside'))!;
    expect(out.locations).toBeUndefined();
    expect(out.message.text).toContain(`the design file ${path.join(outside, 'd-out.fold.yaml')} is outside the repository's work tree`);
  });
});

describe('--format gitlab', () => {
  // GitLab's documented Code Quality report fields (docs "Code Quality", "Implement a custom
  // tool"; from memory): an array of objects with description, check_name, fingerprint, severity
  // (info, minor, major, critical, blocker), location.path and location.lines.begin.
  const schema = {
    type: 'array',
    items: {
      type: 'object',
      required: ['description', 'check_name', 'fingerprint', 'severity', 'location'],
      properties: {
        description: { type: 'string', minLength: 1 },
        check_name: { type: 'string', minLength: 1 },
        fingerprint: { type: 'string', minLength: 1 },
        severity: { enum: ['info', 'minor', 'major', 'critical', 'blocker'] },
        location: {
          type: 'object',
          required: ['path', 'lines'],
          properties: { path: { type: 'string', minLength: 1 }, lines: { type: 'object', required: ['begin'], properties: { begin: { type: 'integer', minimum: 1 } } } },
        },
      },
    },
  };

  it('has the documented fields, unique fingerprints and paths from the repository root', async () => {
    const r = await pleat(['check', '.', '--format', 'gitlab'], { cwd: path.join(repo, 'hw') });
    const issues = JSON.parse(r.stdout) as { fingerprint: string; check_name: string; location: { path: string; lines: { begin: number } }; description: string }[];
    const validate = new Ajv({ allErrors: true }).compile(schema);
    expect(validate(issues), JSON.stringify(validate.errors)).toBe(true);
    expect(new Set(issues.map((i) => i.fingerprint)).size).toBe(issues.length);
    const broken = issues.find((i) => i.check_name === 'rule/negative_delays')!;
    // Run from hw/: the path is still from the work tree root.
    expect(broken.location).toEqual({ path: 'hw/b-fail.fold.yaml', lines: { begin: 13 } });
    expect(broken.description).toContain('Fix: ');
  });

  it('keeps the fingerprint when the finding moves to another line', async () => {
    const d = tempDir();
    await execa('git', ['init', '-q'], { cwd: d });
    write(d, 'b.fold.yaml', failingDesign());
    const before = JSON.parse((await pleat(['check', 'b.fold.yaml', '--format', 'gitlab'], { cwd: d })).stdout);
    write(d, 'b.fold.yaml', `# a comment moves every line\n${failingDesign()}`);
    const after = JSON.parse((await pleat(['check', 'b.fold.yaml', '--format', 'gitlab'], { cwd: d })).stdout);
    expect(after[0].location.lines.begin).toBe(before[0].location.lines.begin + 1);
    expect(after[0].fingerprint).toBe(before[0].fingerprint);
  });
});

describe('--format markdown', () => {
  it('gives the gate, a row per design, and per failing design what broke, where and the fix', async () => {
    const r = await pleat(['check', 'hw', '--format', 'markdown'], { cwd: repo });
    const md = r.stdout;
    expect(md).toMatch(/^### Folding gate invalid$/m);
    expect(md).toMatch(/^\| smoke-pass \| folds \| 2 \| 50% \|/m);
    expect(md).toMatch(/^\| smoke-fail \| breaks negative_delays \| 2 \|/m);
    expect(md).toMatch(/^#### smoke-fail: breaks negative_delays$/m);
    expect(md).toContain('**rule/negative\\_delays** at `hw/b-fail.fold.yaml:13:5`'.replace('\\_', '_'));
    expect(md).toMatch(/^ {2}- fix: Raise the folding factor/m);
    expect(md).toMatch(/\*\*unknown-node\*\* at `hw\/c-invalid\.fold\.yaml:9:13`/);
  });
});
