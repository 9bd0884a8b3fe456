// Control tables of a small retimed plan, worked by hand from the folding equations
// (D_F = N*w_r - P_U + v - u; Parhi, "VLSI Digital Signal Processing Systems", ch. 6), and the
// attachment of the tables to an analysis.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { controlTables, withControl } from '../../shared/hardware/control';
import type { ControlTables } from '../../shared/types';

const { design } = loadDesign(readFileSync(path.join(__dirname, 'fixtures/smoothing-retimed.fold.yaml'), 'utf8'));
const analysis = analyze(design!);
const control = controlTables(design!, analysis).control as ControlTables;

describe('control tables of smoothing-retimed (N = 4), worked by hand', () => {
  // Retiming moves a1 (and the outputs) by one iteration: w_r(g1->a1) = 1, w_r(a1->f) = 0,
  // w_r(f->a1) = 1, w_r(g1->z) = 2. Folded delays: x->g1 0, g1->a1 4-2+0-1 = 1,
  // a1->f 0-1+2-0 = 1, f->a1 4-2+0-2 = 0, g1->z 8-2+3-1 = 8.
  it('uses the retiming of the analysis', () => {
    expect(analysis.retiming.values).toMatchObject({ a1: 1, g1: 0, f: 0, y: 1, z: 1 });
    expect(control.latencyAdded).toBe(1);
  });

  it('needs 3 registers: g1 lives 8 cycles (two in every partition), a1 one cycle in partition 2', () => {
    expect(control.registers).toBe(3);
    expect(analysis.lifetimes!.live).toEqual([2, 2, 3, 2]);
  });

  it('has the operation of each partition on each unit', () => {
    const mul = control.units.find((u) => u.unit === 'MUL')!;
    expect(mul.partitions.map((p) => (p ? `${p.node}:${p.op}:${p.coefficient}` : null))).toEqual([null, 'g1:gain:0.75', 'f:gain:-0.5', null]);
    const add = control.units.find((u) => u.unit === 'ADD')!;
    expect(add.partitions.map((p) => p?.node ?? null)).toEqual(['a1', null, null, null]);
    expect(add.ports).toBe(2);
  });

  it('selects, per partition, the producer itself where the folded delay is 0 and a register otherwise', () => {
    const mux = (unit: string, port: number) => control.muxes.find((m) => m.unit === unit && m.port === port)!;
    const kinds = (unit: string, port: number) =>
      mux(unit, port).select.map((s) => (s === null ? null : mux(unit, port).sources[s].kind));
    // MUL operand 0: x (held input, D_F 0) for g1 in partition 1; a1 from a register for f in partition 2.
    expect(kinds('MUL', 0)).toEqual([null, 'input', 'register', null]);
    expect(mux('MUL', 0).sources.length).toBe(2);
    expect(mux('MUL', 0).reads[2]).toEqual({ from: 'a1', to: 'f', variable: 'a1' });
    // ADD operand 0: g1, one cycle after it appears (produced at 1 + 2 = 3, read at 4 = partition 0 of the next iteration).
    expect(kinds('ADD', 0)).toEqual(['register', null, null, null]);
    expect(mux('ADD', 0).reads[0]).toEqual({ from: 'g1', to: 'a1', variable: 'g1' });
    // ADD operand 1: f straight from the multiplier (produced at 2 + 2 = 4, read at 4).
    expect(mux('ADD', 1).sources).toEqual([{ kind: 'unit', unit: 'MUL' }]);
    expect(kinds('ADD', 1)).toEqual(['unit', null, null, null]);
  });

  it('loads each variable from its unit once per iteration, at the end of its production cycle', () => {
    const fromUnit = control.registerTables.flatMap((r) =>
      r.loads.flatMap((l, t) => (l && l.source.kind === 'unit' ? [`${l.source.unit}@${t}:${l.variable}`] : [])),
    );
    // g1 appears at cycle 3 (partition 3), a1 at cycle 1 (partition 1).
    expect(fromUnit.sort()).toEqual(['ADD@1:a1', 'MUL@3:g1']);
  });

  it('presents outputs one iteration late, as retiming says', () => {
    expect(control.outputs).toEqual([
      // tap: a1's result in cycle 0 + 1; lag r(y) - w_r = 1; first strobe 4*1 + 1 + 1 = 6
      { node: 'y', mode: 'tap', source: { kind: 'unit', unit: 'ADD' }, cycle: 1, lag: 1, firstSample: 0, validAfterIterations: 1 },
      // slot 3: g1 read 8 cycles after it appears (3 + 8 = 11: partition 3, two iterations on)
      { node: 'z', mode: 'slot', source: control.outputs[1].source, cycle: 3, lag: 1, firstSample: 0, validAfterIterations: 1 },
    ]);
    expect(control.outputs[1].source.kind).toBe('register');
    const reg = (control.outputs[1].source as { register: number }).register;
    expect(control.registerTables[reg].holds[3]).toBe('g1@1');
  });
});

describe('withControl', () => {
  it('attaches the tables, null for an infeasible plan, none past the size limit', () => {
    expect(withControl(design!, analysis).control).toEqual(control);
    expect('control' in withControl(design!, analysis, 5)).toBe(false);
    const infeasible = { ...analysis, retiming: { ...analysis.retiming, feasible: false } };
    expect(withControl(design!, infeasible).control).toBeNull();
  });
});
