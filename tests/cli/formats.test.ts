// The report formats of `pleat check`, read back by tools outside the project: JSON.parse for the
// JSON report, fast-xml-parser (npm registry) for JUnit, and the workflow-command syntax
// that GitHub documents for Actions logs.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { escapeData, escapeProperty } from '../../cli/format/github';
import { cleanupTemps, ensureBuilt, EXAMPLES, failingDesign, invalidDesign, passingDesign, pleat, tempDir, write } from './helpers';

let dir: string;
beforeAll(async () => {
  await ensureBuilt();
  dir = tempDir();
  write(dir, 'a-pass.fold.yaml', passingDesign());
  write(dir, 'b-fail.fold.yaml', failingDesign());
  write(dir, 'c-invalid.fold.yaml', invalidDesign());
});
afterAll(cleanupTemps);

describe('--format json', () => {
  it('has the documented top-level and per-design fields', async () => {
    const r = await pleat(['check', '.', '--format', 'json'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    const report = JSON.parse(r.stdout);
    expect(report.format).toBe('pleat-report/1');
    expect(report.tool).toEqual({ name: 'pleat', version: expect.stringMatching(/^\d+\.\d+\.\d+/) });
    expect(report.git).toHaveProperty('branch');
    expect(report.git).toHaveProperty('commit');
    expect(report.verdict).toBe('error');
    expect(report.rules.negative_delays).toEqual({ value: 'retime', source: 'default' });
    expect(report.designs.map((d: { file: string; status: string }) => [d.file, d.status])).toEqual([
      ['a-pass.fold.yaml', 'pass'],
      ['b-fail.fold.yaml', 'fail'],
      ['c-invalid.fold.yaml', 'error'],
    ]);
    const [pass, fail, invalid] = report.designs;
    // A design that did not load still carries the name from its `name:` line.
    expect(invalid.name).toBe('smoke-invalid');
    for (const key of ['file', 'name', 'status', 'diagnostics', 'factor', 'edges', 'retiming', 'utilization', 'registers', 'iterationBound', 'factorLowerBound', 'samplePeriodNs', 'violations']) {
      expect(pass).toHaveProperty(key);
      expect(invalid).toHaveProperty(key);
    }
    expect(Object.keys(pass.edges[0]).sort()).toEqual(['delays', 'foldedDelay', 'from', 'retimedDelays', 'retimedFoldedDelay', 'to']);
    expect(Object.keys(pass.retiming)).toEqual(expect.arrayContaining(['needed', 'feasible', 'values', 'latencyAdded', 'conflict']));
    expect(Object.keys(pass.registers).sort()).toEqual(['delayLines', 'minimum', 'perEdge']);
    expect(Object.keys(pass.iterationBound)).toEqual(expect.arrayContaining(['value', 'numerator', 'denominator', 'loop']));

    // Hand-computed with D_F(U->V) = N*w - P_U + v - u (the folding equation; common practice,
    // no source at hand): N = 2; x is a held input so x->m is N*0 = 0; m->a = 0 - 1 + 1 - 0 = 0;
    // a->m = 2*1 - 0 + 0 - 1 = 1; a->y is a tap into an output without slot, so null.
    expect(pass.edges.map((e: { foldedDelay: number | null }) => e.foldedDelay)).toEqual([0, 0, 1, null]);
    // Utilization: 2 operations on 2 units x 2 partitions.
    expect(pass.utilization.overall).toBeCloseTo(0.5, 12);
    // Loop m -> a -> m: times default to stages (1 + 0) over one delay.
    expect(pass.iterationBound.value).toBe(1);

    expect(fail.violations).toHaveLength(1);
    expect(fail.violations[0]).toMatchObject({ rule: 'negative_delays', source: 'default', limit: 'retime', path: ['edges', 1], line: 13, column: 5 });
    expect(fail.retiming.feasible).toBe(false);
    expect(fail.retiming.conflict.edges.length).toBeGreaterThan(0);
    expect(fail.registers).toBeNull();

    for (const key of ['factor', 'edges', 'retiming', 'utilization', 'registers', 'iterationBound', 'factorLowerBound', 'samplePeriodNs']) {
      expect(invalid[key]).toBeNull();
    }
    const err = invalid.diagnostics.find((d: { severity: string }) => d.severity === 'error');
    expect(err).toMatchObject({ code: 'unknown-node', line: 9, column: 13 });
  });
});

type Suite = { name: string; attrs: Record<string, string>; cases: number; failures: number; errors: number; skipped: number; failureTexts: string[]; errorTexts: string[] };
type XmlElement = { '@'?: Record<string, string>; '#text'?: string; [child: string]: unknown };

/** Parses XML with fast-xml-parser (npm registry, its validator checks well-formedness) and returns what the test needs. */
function parseXml(xml: string): { ok: boolean; error?: string; suites?: Suite[]; root?: Record<string, string> } {
  const valid = XMLValidator.validate(xml);
  if (valid !== true) return { ok: false, error: `${valid.err.msg} (line ${valid.err.line})` };
  const parser = new XMLParser({
    ignoreAttributes: false,
    attributeNamePrefix: '',
    attributesGroupName: '@',
    parseAttributeValue: false,
    parseTagValue: false,
    trimValues: false,
    isArray: (name) => ['testsuite', 'testcase', 'failure', 'error', 'skipped'].includes(name),
  });
  const doc = parser.parse(xml) as Record<string, XmlElement>;
  const root = doc.testsuites;
  if (!root) return { ok: false, root: {} };
  const kids = (e: XmlElement, name: string) => ((e[name] as XmlElement[] | undefined) ?? []).map((k) => (typeof k === 'string' ? { '#text': k } : k));
  const text = (e: XmlElement) => `${e['@']?.message ?? ''}|${e['#text'] ?? ''}`;
  const suites = kids(root, 'testsuite').map((s): Suite => {
    const cases = kids(s, 'testcase');
    const all = (name: string) => cases.flatMap((c) => kids(c, name));
    return {
      name: s['@']?.name ?? '',
      attrs: s['@'] ?? {},
      cases: cases.length,
      failures: all('failure').length,
      errors: all('error').length,
      skipped: all('skipped').length,
      failureTexts: all('failure').map(text),
      errorTexts: all('error').map(text),
    };
  });
  return { ok: true, root: root['@'] ?? {}, suites };
}

describe('--format junit', () => {
  it('is well-formed XML with one testsuite per design file and consistent counts', async () => {
    const r = await pleat(['check', '.', '--format', 'junit'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    expect(r.stdout.startsWith('<?xml version="1.0" encoding="UTF-8"?>')).toBe(true);
    const x = parseXml(r.stdout);
    expect(x.error).toBeUndefined();
    expect(x.ok).toBe(true);
    const suites = x.suites!;
    expect(suites.map((s) => s.name)).toEqual(['a-pass.fold.yaml', 'b-fail.fold.yaml', 'c-invalid.fold.yaml']);
    for (const s of suites) {
      // The attributes say what the children are.
      expect(Number(s.attrs.tests)).toBe(s.cases);
      expect(Number(s.attrs.failures)).toBe(s.failures);
      expect(Number(s.attrs.errors)).toBe(s.errors);
      expect(Number(s.attrs.skipped)).toBe(s.skipped);
    }
    // Default rules: one validity case and one case for negative_delays per design.
    expect(suites.map((s) => [s.cases, s.failures, s.errors, s.skipped])).toEqual([
      [2, 0, 0, 0],
      [2, 1, 0, 0],
      [2, 0, 1, 1],
    ]);
    expect(x.root).toMatchObject({ tests: '6', failures: '1', errors: '1', skipped: '1' });
    expect(suites[2].errorTexts[0]).toContain('c-invalid.fold.yaml:9:13: error unknown-node');
  });

  it('a rule that could not be checked is skipped with the reason; a failure carries the fixes', async () => {
    const d = tempDir();
    write(d, 'pleat.config.yaml', 'designs: ["*.fold.yaml"]\nrules:\n  max_registers: 64\n');
    write(d, 'b-fail.fold.yaml', failingDesign());
    const r = await pleat(['check', '--format', 'junit'], { cwd: d });
    expect(r.exitCode).toBe(1);
    const x = parseXml(r.stdout);
    const s = x.suites![0];
    // validity, negative_delays (broken), max_registers (no feasible datapath: no register count).
    expect([s.cases, s.failures, s.errors, s.skipped]).toEqual([3, 1, 0, 1]);
    expect(r.stdout).toMatch(/<testcase name="rule max_registers = 64 \(repository\)"[^>]*>\s*<skipped message="max_registers not checked: no feasible folded datapath exists/);
    expect(s.failureTexts[0]).toMatch(/\nfix: Raise the folding factor to 3/);
  });

  it('escapes markup characters in messages', async () => {
    const d = tempDir();
    write(d, 'odd.fold.yaml', invalidDesign().replace('{ from: ghost, to: y }', '{ from: "a<b&\\"c\\"]]>", to: y }'));
    const r = await pleat(['check', 'odd.fold.yaml', '--format', 'junit'], { cwd: d });
    const x = parseXml(r.stdout);
    expect(x.error).toBeUndefined();
    expect(x.suites![0].errorTexts.join('\n')).toContain('a<b&"c"]]>');
  });
});

// Workflow command syntax, GitHub docs "Workflow commands for GitHub Actions":
// ::error file={name},line={line},col={column},title={title}::{message}
const COMMAND = /^::(error|warning|notice)( [a-zA-Z]+=[^,:\r\n]*(,[a-zA-Z]+=[^,:\r\n]*)*)?::[^\r\n]*$/;

describe('--format github', () => {
  it('writes only workflow commands, one per problem', async () => {
    const r = await pleat(['check', '.', '--format', 'github'], { cwd: dir });
    expect(r.exitCode).toBe(2);
    const lines = r.stdout.trimEnd().split('\n');
    for (const line of lines) expect(line).toMatch(COMMAND);
    expect(lines).toContain('::error file=c-invalid.fold.yaml,line=9,col=13,title=pleat unknown-node::edges[0].from names node `ghost`, which does not exist');
    // The violation points at the edge with the negative folded delay (m -> a, line 13).
    const broken = lines.find((l) => l.startsWith('::error file=b-fail.fold.yaml,line=13,col=5,title=pleat rule negative_delays (default)::smoke-fail: '))!;
    // The fix goes with the annotation, on lines of its own (LF escaped as %0A).
    expect(broken).toMatch(/%0Afix: Raise the folding factor to 3/);
    expect(lines.at(-1)).toBe('::notice title=pleat error::gate invalid: 1 design invalid (smoke-invalid); smoke-fail breaks negative_delays; 1 of 3 designs fold');
  });

  it('escapes properties and data as GitHub\'s toolkit does', async () => {
    // @actions/core (actions/toolkit, packages/core/src/command.ts): data escapes % CR LF as
    // %25 %0D %0A; properties additionally escape : and , as %3A and %2C.
    expect(escapeData('100% done\r\nnext')).toBe('100%25 done%0D%0Anext');
    expect(escapeProperty('a:b,c%')).toBe('a%3Ab%2Cc%25');
    const d = tempDir();
    write(d, 'we,ird:name.fold.yaml', invalidDesign());
    const r = await pleat(['check', 'we,ird:name.fold.yaml', '--format', 'github'], { cwd: d });
    const first = r.stdout.split('\n').find((l) => l.includes('unknown-node'))!;
    expect(first).toMatch(COMMAND);
    expect(first).toContain('file=we%2Cird%3Aname.fold.yaml,line=9,col=13');
  });
});

describe('--format text', () => {
  it('gives a verdict line per design, the loop that blocks retiming, and positioned diagnostics', async () => {
    const r = await pleat(['check', '.'], { cwd: dir });
    const out = r.stdout;
    // The stable line shapes of docs/cli.md ("Text").
    const blocks = out.split('\n\n');
    expect(blocks[0]).toMatch(/^design smoke-pass  N=2  folds\n  file      a-pass\.fold\.yaml\n  figures   util 50%  regs \d+  bound 1/);
    expect(blocks[0]).toMatch(/^ {2}rules     held negative_delays=retime$/m);
    const fail = blocks[1].split('\n');
    expect(fail[0]).toBe('design smoke-fail  N=2  breaks negative_delays');
    // Failures come before the details: the broken rule, then the loop, then the negative edges.
    const order = ['  broken    ', '  loop      ', '  on-loop   ', '  negative  ', '  edge      '].map((p) => fail.findIndex((l) => l.startsWith(p)));
    expect(order.every((i) => i > 0)).toBe(true);
    expect([...order].sort((a, b) => a - b)).toEqual(order);
    // The rule points at the edge m -> a (line 13 of the fixture), and so do its edge lines.
    expect(blocks[1]).toMatch(/^ {2}broken {4}negative_delays=retime \(default\) at b-fail\.fold\.yaml:13:5: /m);
    expect(blocks[1]).toMatch(/no retiming exists: loop .*needs N >= 3/);
    expect(blocks[1]).toMatch(/^ {2}edge {6}b-fail\.fold\.yaml:13:5  m -> a  delays 0  folded -3  /m);
    expect(blocks[2]).toMatch(/^design smoke-invalid  N=\?  invalid: 1 error\n  file      c-invalid\.fold\.yaml$/m);
    expect(out).toContain('  c-invalid.fold.yaml:9:13: error unknown-node:');
    expect(out).toMatch(/^gate invalid: 1 design invalid \(smoke-invalid\); smoke-fail breaks negative_delays; 1 of 3 designs fold$/m);
    // Nothing of a test runner's summary is left.
    expect(out).not.toMatch(/^(PASS|FAIL|ERROR)\b|designs? checked/m);
  });

  it('--quiet leaves out passing designs and warnings', async () => {
    const r = await pleat(['check', '.', '--quiet'], { cwd: dir });
    expect(r.stdout).not.toContain('smoke-pass');
    expect(r.stdout).not.toContain('warning');
    expect(r.stdout).toContain('smoke-fail');
    expect(r.stdout).toContain('error unknown-node');
    const quietPass = await pleat(['check', 'a-pass.fold.yaml', '--quiet'], { cwd: dir });
    expect(quietPass.exitCode).toBe(0);
    expect(quietPass.stdout).toBe('');
  });
});

describe('control characters from files never reach the terminal or the CI log raw', () => {
  it('ESC, NUL and U+2028 in ids and file names are shown escaped in text, github, junit and json output', async () => {
    const dir = tempDir();
    // An id with a terminal colour sequence, one with NUL, one with a line separator (YAML escapes).
    const text = passingDesign('ctl-chars')
      .replace(/\bid: x\b/g, 'id: "x\\e[31m"')
      .replace(/from: x\b/g, 'from: "x\\e[31m"')
      .replace(/\bkind: output\b/, 'kind: output }\n  - { id: "dead\\0end\\u2028", kind: input');
    write(dir, 'evil\u001b[2J.fold.yaml', text);
    for (const format of ['text', 'github', 'junit', 'json']) {
      const r = await pleat(['check', '.', '--format', format], { cwd: dir });
      expect([0, 1, 2], format).toContain(r.exitCode);
      const all = r.stdout + r.stderr;
      expect(all, format).not.toMatch(/[\u0000\u001b\u2028]/);
      if (format !== 'json') expect(all, format).toMatch(/evil\\x1b\[2J\.fold\.yaml/);
      else expect(JSON.parse(r.stdout).designs[0].file).toBe('evil\u001b[2J.fold.yaml'); // same data, escaped as JSON
    }
    const t = await pleat(['check', '.'], { cwd: dir });
    expect(t.stdout).toMatch(/dead\\x00end\\u2028/);
  });

  it('escapes ids in the lists the text cuts short: negative edges and moved nodes', async () => {
    const dir = tempDir();
    // The retimed example, its node u1 (on two negative edges, moved by the retiming) renamed
    // with a terminal colour sequence.
    const text = readFileSync(path.join(EXAMPLES, 'equaliser-retimed.fold.yaml'), 'utf8').replace(/\bu1\b/g, '"u1\\e[31m"');
    write(dir, 'eq.fold.yaml', text);
    const r = await pleat(['check', '.'], { cwd: dir });
    expect(r.exitCode).toBe(0);
    expect(r.stdout).not.toMatch(/\u001b/);
    expect(r.stdout).toMatch(/mb1 -> u1\\x1b\[31m  delays 0/);
    // In the engine's node order, the escaped id where the id was (it used to move to the end).
    expect(r.stdout).toMatch(/moved {5}u1\\x1b\[31m \+1, t1 \+1, /);
    expect(r.stdout).toMatch(/negative {2}4 edges of 14 with a negative folded delay/);
  });
});
