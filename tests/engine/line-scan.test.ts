// The line scan (shared/design/lineScan.ts) either declines or gives exactly the position the
// event-parser locator gives (shared/design/positions.ts locate), for every path asked, on random
// design texts in many YAML styles, every example, every YAML fixture and generated designs.
// Reference: the event-parser locator itself (js-yaml 5's parseEvents), the project's one YAML position lookup.
import { describe, it, expect } from 'vitest';
import { readFileSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { load } from 'js-yaml';
import { locate, locateLoaded } from '../../shared/design/positions';
import { offsetsIn, scanOffsets, scanSections } from '../../shared/design/lineScan';
import type { Diagnostic } from '../../shared/types';
import { generateDesign } from '../../scripts/gen-design.mjs';

const root = fileURLToPath(new URL('../../', import.meta.url));

function probe(p: (string | number)[], atKey: boolean): Diagnostic {
  return { severity: 'warning', code: atKey ? 'schema-unknown-field' : 'edge', message: '', line: null, column: null, path: p };
}

function loads(text: string): boolean {
  try {
    load(text);
    return true;
  } catch {
    return false;
  }
}

/** Every path worth asking: each top-level key (at the key and at the value), each item and one past the end, a field, missing ones. */
function probesFor(text: string): Diagnostic[] {
  let doc: unknown;
  try {
    doc = load(text);
  } catch {
    doc = null;
  }
  const out: Diagnostic[] = [probe([], false), probe(['nope'], true), probe(['edges', 0], false)];
  if (doc && typeof doc === 'object' && !Array.isArray(doc)) {
    for (const [k, v] of Object.entries(doc as Record<string, unknown>)) {
      out.push(probe([k], true), probe([k], false));
      if (Array.isArray(v)) {
        for (let i = 0; i <= v.length; i++) out.push(probe([k, i], false), probe([k, i], true));
        out.push(probe([k, 0, 'from'], false), probe([k, '01'], false));
      }
    }
  }
  return out;
}

/** The scan answers each path alone where it can; where it answers it must equal the event parser. */
function agree(text: string): number {
  const probes = probesFor(text);
  const reference = locate(text, probes);
  // All at once through the entry point the check uses.
  expect(locateLoaded(text, probes)).toEqual(reference);
  let answered = 0;
  const sections = scanSections(text);
  if (!sections) return 0;
  probes.forEach((d, i) => {
    const offs = offsetsIn(sections, [{ path: d.path ?? [], atKey: d.code === 'schema-unknown-field' }]);
    if (!offs) return;
    answered++;
    const before = text.slice(0, offs[0]);
    const line = before.split('\n').length;
    const column = offs[0] - (before.lastIndexOf('\n') + 1) + 1;
    expect([line, column], `${JSON.stringify(d.path)} in:\n${text.slice(0, 3000)}`).toEqual([reference[i].line, reference[i].column]);
  });
  return answered;
}

// ---------------------------------------------------------------- random texts

const plain = fc.constantFrom('a', 'x0', 'c0s1m', 'mul', '1', '-0.5', '0.7071', 'true', 'null', 'a b', 'pleat/1');
const scalar = fc.oneof(
  { weight: 12, arbitrary: plain },
  { weight: 2, arbitrary: plain.map((s) => `"${s}"`) },
  { weight: 2, arbitrary: plain.map((s) => `'${s}'`) },
  { weight: 1, arbitrary: fc.constantFrom("'it''s'", '"say \\"hi\\""', '"a # b"', 'a#b', '"[x]"', "'{y}'", "it's", 'say "x"', '~', '') },
);
const field = fc.constantFrom('from', 'to', 'delays', 'port', 'id', 'kind', '"from"', "'to'");
const comment = fc.oneof({ weight: 20, arbitrary: fc.constantFrom('', '', '  # note', ' # a * b', ' #x') }, { weight: 1, arbitrary: fc.constant('# no space') });
const odd = fc.constantFrom('&a ', '*a', '!!str ', '? ', '- ', '| ', '>- ', '\t', '[', '{', '"', "'", '@', '`', '%', '\r');

interface Item {
  style: 'flow' | 'block' | 'scalar' | 'flowSeq' | 'bare' | 'multiFlow' | 'multiQuoted' | 'odd';
  fields: [string, string][];
  value: string;
  tail: string;
  oddText: string;
}
const item: fc.Arbitrary<Item> = fc.record({
  style: fc.oneof(
    { weight: 30, arbitrary: fc.constantFrom<'flow' | 'block' | 'scalar'>('flow', 'block', 'scalar') },
    { weight: 1, arbitrary: fc.constantFrom<'flowSeq' | 'bare' | 'multiFlow' | 'multiQuoted' | 'odd'>('flowSeq', 'bare', 'multiFlow', 'multiQuoted', 'odd') },
  ),
  fields: fc.array(fc.tuple(field, scalar), { minLength: 1, maxLength: 3 }),
  value: scalar,
  tail: comment,
  oddText: odd,
});

function itemLines(it: Item, ind: string, spacing: string): string[] {
  const fs = it.fields;
  switch (it.style) {
    case 'flow':
      return [`${ind}-${spacing}{ ${fs.map(([k, v]) => `${k}: ${v}`).join(', ')} }${it.tail}`];
    case 'block':
      return [`${ind}-${spacing}${fs[0][0]}: ${fs[0][1]}${it.tail}`, ...fs.slice(1).map(([k, v]) => `${ind} ${spacing}${k}: ${v}`)];
    case 'scalar':
      return [`${ind}-${spacing}${it.value}${it.tail}`];
    case 'flowSeq':
      return [`${ind}-${spacing}[${fs.map(([, v]) => v).join(', ')}]${it.tail}`];
    case 'bare':
      return [`${ind}-`, ...fs.map(([k, v]) => `${ind}  ${k}: ${v}`)];
    case 'multiFlow':
      return [`${ind}-${spacing}{ ${fs[0][0]}: ${fs[0][1]},`, `${ind}  - x: 1 }`];
    case 'multiQuoted':
      return [`${ind}-${spacing}"first`, `${ind}  - second"`];
    default:
      return [`${ind}-${spacing}${it.oddText}${fs[0][0]}: ${fs[0][1]}`];
  }
}

interface Section {
  key: string;
  kind: 'seq' | 'scalar' | 'block scalar' | 'map' | 'empty';
  indent: number;
  spacing: string;
  items: Item[];
  value: string;
  between: string[];
}
const section: fc.Arbitrary<Section> = fc.record({
  key: fc.constantFrom('edges', 'nodes', 'units', 'name', 'format', 'kinds', 'description', 'clock_ns', 'x-y', 'edges', 'edges'),
  kind: fc.constantFrom<Section['kind']>('seq', 'seq', 'seq', 'scalar', 'block scalar', 'map', 'empty'),
  indent: fc.constantFrom(0, 2, 2, 4, 1),
  spacing: fc.constantFrom(' ', ' ', '  '),
  items: fc.array(item, { maxLength: 6 }),
  value: scalar,
  between: fc.array(fc.oneof({ weight: 8, arbitrary: fc.constantFrom('', '# c', '  # indented comment', '   ', '    deeper: 1') }, { weight: 1, arbitrary: fc.constantFrom('  - odd: &x 1', '  more plain', ' - less indented') }), { maxLength: 2 }),
});

function render(sections: Section[], lead: string): string {
  const lines: string[] = lead ? [lead] : [];
  const seen = new Set<string>();
  for (const s of sections) {
    if (seen.has(s.key)) continue; // a repeated key does not load
    seen.add(s.key);
    const ind = ' '.repeat(s.indent);
    switch (s.kind) {
      case 'seq':
        lines.push(`${s.key}:`);
        s.items.forEach((it, i) => {
          lines.push(...itemLines(it, ind, s.spacing));
          if (i === 0) lines.push(...s.between);
        });
        break;
      case 'scalar':
        lines.push(`${s.key}: ${s.value}`);
        break;
      case 'block scalar':
        lines.push(`${s.key}: >-`, '  Folded text with * and & and: colons', '', '  - not an item', 'edges: not a key either');
        break;
      case 'map':
        lines.push(`${s.key}:`, `${ind || '  '}add: { time: 1 }`, `${ind || '  '}mul:`, `${ind || '  '}  time: 2`);
        break;
      default:
        lines.push(`${s.key}:`);
    }
  }
  return lines.join('\n') + '\n';
}

describe('line scan', () => {
  it('declines or agrees with the event-parser locator on random design texts', () => {
    let answered = 0;
    let texts = 0;
    fc.assert(
      fc.property(fc.array(section, { minLength: 1, maxLength: 5 }), fc.oneof({ weight: 12, arbitrary: fc.constantFrom('', '# head') }, { weight: 1, arbitrary: fc.constantFrom('---', '%YAML 1.2\n---', '\uFEFF', '\t') }), (sections, lead) => {
        const text = render(sections, lead);
        if (!loads(text)) return;
        texts++;
        answered += agree(text);
      }),
      { numRuns: 1000, seed: 12 },
    );
    // The generator is worth running only if the fast path answers often (about 1,700 paths with this seed).
    expect(answered).toBeGreaterThan(1000);
    expect(texts).toBeGreaterThan(300);
  }, 240_000);

  it('agrees on the examples and the YAML fixtures', () => {
    const files: string[] = [];
    const walk = (dir: string) => {
      for (const f of readdirSync(dir)) {
        const p = path.join(dir, f);
        if (statSync(p).isDirectory()) walk(p);
        else if (/\.ya?ml$/.test(f)) files.push(p);
      }
    };
    walk(path.join(root, 'examples'));
    walk(path.join(root, 'tests'));
    expect(files.length).toBeGreaterThan(20);
    let fast = 0;
    for (const f of files) {
      const text = readFileSync(f, 'utf8');
      agree(text);
      if (scanSections(text)) fast++;
    }
    // The common layout is the examples' layout: the scan must understand all of them.
    expect(fast).toBeGreaterThan(files.length / 2);
    for (const f of readdirSync(path.join(root, 'examples')).filter((x) => x.endsWith('.fold.yaml'))) {
      expect(scanSections(readFileSync(path.join(root, 'examples', f), 'utf8')), f).not.toBeNull();
    }
  }, 240_000);

  it('agrees on generated designs', () => {
    for (const seed of [1, 2, 3]) {
      const { text } = generateDesign({ edges: 1500, seed }) as { text: string };
      expect(scanSections(text)).not.toBeNull();
      agree(text);
    }
  }, 240_000);

  it('declines on texts it does not fully understand', () => {
    const base = 'format: pleat/1\nedges:\n  - { from: a, to: b }\n  - { from: b, to: c }\n';
    expect(scanOffsets(base, [{ path: ['edges', 1], atKey: false }])).toEqual([base.indexOf('{ from: b')]);
    for (const bad of [
      base.replace('a, to', 'a,\n    to'), // flow map over two lines
      base.replace('{ from: a', '&x { from: a'), // anchor
      base.replace('  - {', '\t- {'), // tab
      base.replace(/\n/g, '\r\n'), // CRLF
      '---\n' + base, // document marker
      '{"format": "pleat/1", "edges": []}\n', // JSON text
      base + 'edges: []\n', // duplicate key
      base.replace('- { from: b', '-\n    { from: b'), // item value on the next line
    ]) {
      expect(scanOffsets(bad, [{ path: ['edges', 1], atKey: false }]), bad).toBeNull();
    }
  });
});
