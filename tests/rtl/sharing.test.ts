// Unit modules shared by kind, pipeline stages and operations (docs/rtl.md): the module text
// depends on nothing else, so units of one shape instantiate one module. Bit-exactness of the
// shared modules is checked in Icarus Verilog by rtl.test.ts on every example. Common practice,
// no source: one module definition, many instances.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { controlTables } from '../../shared/hardware/control';
import { generateRtl } from '../../shared/hardware/rtl';

const ROOT = path.resolve(__dirname, '../..');

function bundleOf(file: string) {
  const design = loadDesign(readFileSync(path.join(ROOT, file), 'utf8')).design!;
  const control = controlTables(design, analyze(design)).control!;
  return { bundle: generateRtl(design, control), control };
}

describe('unit modules shared by kind and stages', () => {
  it('butterfly-stage: two 0-stage adders instantiate one add module, the multiplier its own', () => {
    const { bundle, control } = bundleOf('examples/butterfly-stage.fold.yaml');
    const top = bundle.files[0];
    expect(bundle.files.map((f) => f.name)).toEqual([`${bundle.top}.v`, `${bundle.top}_mul_s1.v`, `${bundle.top}_add_s0.v`]);
    const adders = control.units.filter((u) => u.kind === 'add' && u.partitions.some((p) => p));
    expect(adders.length).toBe(2);
    // One instance per unit, each named after its unit.
    expect(top.text.match(new RegExp(`^  ${bundle.top}_add_s0 #`, 'gm'))?.length).toBe(adders.length);
    for (const u of adders) expect(top.text).toContain(`pl_${u.unit}_u (`);
    const add = bundle.files[2].text;
    expect(add).toContain(`module ${bundle.top}_add_s0 #(`);
    expect(add).toContain('instantiated for 2 units');
  });

  it('the generated hydrophone bank: hundreds of units, one module file per kind', () => {
    const { bundle, control } = bundleOf('examples/generated-hydrophone-bank.fold.yaml');
    expect(control.units.length).toBeGreaterThan(100);
    expect(bundle.files.map((f) => f.name).sort()).toEqual([`${bundle.top}.v`, `${bundle.top}_add_s1.v`, `${bundle.top}_mul_s2.v`].sort());
  });
});
