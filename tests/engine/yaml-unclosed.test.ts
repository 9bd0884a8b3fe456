// A YAML syntax error caused by a bracket or quote left open names where it was opened, not only
// where the parser noticed (shared/design/unclosed.ts, used by shared/design/load.ts). The reference for "which
// construct is left open" is the `yaml` package's own lexer and parser (a general-purpose YAML 1.2
// library from the npm registry): a flow collection token with no closing token.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { LineCounter, Parser } from 'yaml';
import { loadDesign } from '../../shared/design/load';

const example = readFileSync(fileURLToPath(new URL('../../examples/sensor-frontend.fold.yaml', import.meta.url)), 'utf8');

/** Line:column of every flow collection the `yaml` parser leaves without its closing token. */
function unclosedByYamlPackage(text: string): string[] {
  const lines = new LineCounter();
  const found: string[] = [];
  const visit = (tok: unknown): void => {
    if (Array.isArray(tok)) return tok.forEach(visit);
    if (!tok || typeof tok !== 'object') return;
    const t = tok as { type?: string; start?: { offset: number }; end?: { type: string }[] };
    if (t.type === 'flow-collection' && !(t.end ?? []).some((e) => e.type === 'flow-map-end' || e.type === 'flow-seq-end')) {
      const p = lines.linePos(t.start!.offset);
      found.push(`${p.line}:${p.col}`);
    }
    for (const v of Object.values(tok)) if (v && typeof v === 'object') visit(v);
  };
  for (const token of new Parser(lines.addNewLine).parse(text)) visit(token);
  return found;
}

/** An invented 40-line design: a chain of adders, one flow mapping per line. */
function chain(): string[] {
  const lines = ['format: pleat/1', 'name: tally-chain', 'units:', '  - { id: ADD1, kind: add, stages: 1 }', 'nodes:', '  - { id: x, kind: input }'];
  for (let k = 1; k <= 12; k++) lines.push(`  - { id: s${k}, kind: add }`);
  lines.push('  - { id: y, kind: output }', 'edges:', '  - { from: x, to: s1 }');
  for (let k = 1; k < 12; k++) lines.push(`  - { from: s${k}, to: s${k + 1} }`);
  lines.push('  - { from: s12, to: y }', '  - { from: s12, to: s1, delays: 12 }', 'folding:', '  factor: 12', '  sets:');
  lines.push(`    ADD1: [${Array.from({ length: 12 }, (_, k) => `s${k + 1}`).join(', ')}]`);
  return lines;
}

describe('a bracket left open', () => {
  it('is named with the line and column where it was opened', () => {
    const lines = chain();
    expect(loadDesign(lines.join('\n') + '\n').diagnostics).toEqual([]);
    // Line 33 loses its closing brace; its `{` is at column 5.
    expect(lines[32]).toBe('  - { from: s12, to: y }');
    lines[32] = lines[32]!.replace(' }', '');
    const text = lines.join('\n') + '\n';
    const [d, ...rest] = loadDesign(text).diagnostics;
    expect(rest).toEqual([]);
    expect(d!.code).toBe('yaml-syntax');
    // js-yaml stops on the next line, where the indentation no longer fits the open mapping.
    expect([d!.line, d!.column]).toEqual([34, 3]);
    expect(unclosedByYamlPackage(text)).toEqual(['33:5']);
    expect(d!.message).toContain('the `{` opened at 33:5 is never closed');
  });

  it('agrees with the yaml package for every flow mapping or sequence of an example with its closing bracket removed', () => {
    let checked = 0;
    for (let i = 0; i < example.length; i++) {
      const c = example[i];
      if (c !== '}' && c !== ']') continue;
      const text = example.slice(0, i) + example.slice(i + 1);
      const diags = loadDesign(text).diagnostics.filter((d) => d.code === 'yaml-syntax');
      const reference = unclosedByYamlPackage(text);
      if (diags.length === 0) continue; // js-yaml may still read it (a bracket closed by the end of a flow entry)
      expect(reference.length, `removed ${c} at offset ${i}`).toBeGreaterThan(0);
      const named = /opened at (\d+:\d+) is never closed/.exec(diags[0]!.message)?.[1];
      expect(reference, `removed ${c} at offset ${i}: ${diags[0]!.message}`).toContain(named);
      checked++;
    }
    expect(checked).toBeGreaterThan(10);
  });

  it('names an unterminated quoted string', () => {
    const text = 'format: pleat/1\nname: "tally\nunits: []\n';
    const [d] = loadDesign(text).diagnostics;
    expect(d!.code).toBe('yaml-syntax');
    expect(d!.message).toContain('the `"` opened at 2:7 is never closed');
  });

  it('claims nothing for an error inside a collection that is closed later, or for brackets inside comments, quotes and block scalars', () => {
    // Common practice, no source: these are syntax errors that no open bracket explains.
    for (const text of [
      'format: pleat/1\nname: { a: 1, b: c: d }\n',
      'format: pleat/1\nname: "bad \\q escape"\n',
      'format: pleat/1 # { not a bracket\nnote: "[ not one either"\ndescription: |\n  { nor this\nname: [a, b\n',
    ]) {
      const [d] = loadDesign(text).diagnostics;
      expect(d!.code, text).toBe('yaml-syntax');
      const named = /opened at (\d+:\d+)/.exec(d!.message)?.[1];
      expect(named ?? null, text).toEqual(unclosedByYamlPackage(text)[0] ?? null);
    }
  });
});
