// The folded datapath, built only from the control tables and run cycle by cycle, against the
// unfolded graph evaluated directly. The theorem of the folding transformation (Parhi, "VLSI
// Digital Signal Processing Systems", ch. 6): a plan whose folded delays are all nonnegative,
// after retiming, computes the same outputs, shifted by the latency retiming adds.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { controlTables } from '../../shared/hardware/control';
import { simulateDesign } from '../../shared/hardware/foldedSim';
import type { Analysis, ControlTables, Design } from '../../shared/types';
import { randomDesignFile as randomDesign } from '../support/randomDesign';

const EXAMPLES = path.resolve(__dirname, '../../examples');

function exampleDesigns(): { file: string; design: Design }[] {
  const out: { file: string; design: Design }[] = [];
  for (const f of readdirSync(EXAMPLES).filter((f) => f.endsWith('.fold.yaml')).sort()) {
    const { design } = loadDesign(readFileSync(path.join(EXAMPLES, f), 'utf8'));
    if (design) out.push({ file: f, design });
  }
  return out;
}

function withTables(design: Design, a: Analysis, tables: ControlTables): Analysis {
  return { ...a, control: tables };
}

describe('folded simulation of random feasible designs', () => {
  it('matches the unfolded graph exactly, in exact decimals and in the RTL\'s fixed point', () => {
    let feasible = 0;
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 0x7fffffff }), (seed) => {
        const { design, text } = randomDesign(seed);
        const a = analyze(design);
        const tables = controlTables(design, a);
        if (!a.retiming.feasible) {
          // No datapath to build: the tables say so, and so does the simulation.
          expect(tables.control).toBeNull();
          expect(simulateDesign(design, a).diagnostics.map((d) => d.code)).toEqual(['sim-infeasible']);
          return;
        }
        feasible++;
        for (const arithmetic of ['exact', 'fixed'] as const) {
          const { report } = simulateDesign(design, a, { arithmetic, iterations: 20, seed: seed ^ 0x5a5a });
          expect(report, text).not.toBeNull();
          expect(report!.firstMismatch, `${arithmetic}\n${text}`).toBeNull();
          expect(report!.match).toBe(true);
          expect(report!.samplesPerOutput).toBeGreaterThan(0);
          // Every output sample was compared: K samples per output.
          expect(report!.samplesCompared).toBe(report!.samplesPerOutput * report!.outputs.length);
        }
      }),
      { numRuns: 120, seed: 20260401 },
    );
    // The property must not hold vacuously: most random plans are feasible.
    expect(feasible).toBeGreaterThan(60);
  });

  it('uses the lifetime minimum of registers (forward-backward allocation reaches it)', () => {
    // Parhi ch. 6: forward-backward allocation needs exactly max_t live(t) registers.
    for (let seed = 1; seed <= 60; seed++) {
      const { design } = randomDesign(seed);
      const a = analyze(design);
      if (!a.retiming.feasible) continue;
      const c = controlTables(design, a).control!;
      expect(c.registers).toBe(a.registers!.minimum);
      // Every mux select points at a real input.
      for (const m of c.muxes) for (const s of m.select) if (s !== null) expect(s).toBeLessThan(m.sources.length);
      if (c.allocationSource !== 'analysis') continue;
      // The tables read the allocation as it is: same instance in the same register in every
      // partition, and loads derived from it equal the transfers the allocation lists.
      const alloc = a.allocation!;
      for (let t = 0; t < c.factor; t++) {
        for (let k = 0; k < c.registers; k++) expect(c.registerTables[k].holds[t], `R${k} in ${t}`).toBe(alloc.cells[t][k] ?? null);
      }
      const ours = c.registerTables.flatMap((r) =>
        r.loads.flatMap((l, t) => (l ? [`${t} ${l.variable} ${l.source.kind === 'register' ? l.source.register : 'unit'} ${r.register}`] : [])),
      );
      // A transfer from a register to itself is a hold.
      const theirs = alloc.moves.filter((m) => m.from !== m.to).map((m) => `${m.cycle} ${m.variable} ${m.from} ${m.to}`);
      expect(ours.sort()).toEqual(theirs.sort());
    }
  });

  it('still matches with Pleat\'s own placement when the analysis carries no allocation table', () => {
    let used = 0;
    for (let seed = 100; seed < 160; seed++) {
      const { design, text } = randomDesign(seed);
      const a = analyze(design);
      if (!a.retiming.feasible) continue;
      const bare: Analysis = { ...a, allocation: null, allocationOmitted: 'left out by the test' };
      const c = controlTables(design, bare).control!;
      expect(c.allocationSource).toBe('control');
      expect(c.registers).toBe(a.registers!.minimum);
      const { report } = simulateDesign(design, withTables(design, bare, c), { iterations: 16 });
      expect(report!.firstMismatch, text).toBeNull();
      used++;
    }
    expect(used).toBeGreaterThan(20);
  });
});

describe('folded simulation of the example designs', () => {
  const examples = exampleDesigns();

  it('has examples to simulate', () => {
    expect(examples.length).toBeGreaterThan(0);
  });

  for (const { file, design } of examples) {
    it(`${file}: simulates without mismatch (or has no datapath when no retiming exists)`, () => {
      const a = analyze(design);
      const { report, diagnostics } = simulateDesign(design, a, { iterations: 32 });
      if (!a.retiming.feasible) {
        expect(diagnostics.map((d) => d.code)).toEqual(['sim-infeasible']);
        return;
      }
      expect(report!.firstMismatch).toBeNull();
      expect(report!.samplesPerOutput).toBe(32);
      expect(report!.latencyAdded).toBe(a.retiming.latencyAdded);
    });
  }
});

describe('the comparison can fail', () => {
  // Our fixture: registers, register-to-register moves, latency from retiming, a tap and a slot output.
  const { design } = loadDesign(readFileSync(path.join(__dirname, 'fixtures/smoothing-retimed.fold.yaml'), 'utf8'));
  const a = analyze(design!);
  const base = controlTables(design!, a).control!;
  const mutate = (f: (c: ControlTables) => void) => {
    const c: ControlTables = structuredClone(base);
    f(c);
    return simulateDesign(design!, withTables(design!, a, c), { iterations: 24 }).report!;
  };

  it('the unmutated tables match', () => {
    expect(a.retiming.needed).toBe(true);
    expect(a.retiming.latencyAdded).toBe(1);
    expect(mutate(() => {}).match).toBe(true);
  });

  it('catches a register that loads in the wrong partition', () => {
    const r = mutate((c) => {
      const rt = c.registerTables.find((x) => x.loads.some((l) => l !== null))!;
      const t = rt.loads.findIndex((l) => l !== null);
      const u = (t + 1) % c.factor;
      [rt.loads[t], rt.loads[u]] = [rt.loads[u], rt.loads[t]];
    });
    expect(r.match).toBe(false);
    expect(r.firstMismatch).not.toBeNull();
  });

  it('catches a multiplexer that selects the wrong source', () => {
    const r = mutate((c) => {
      const m = c.muxes.find((x) => x.sources.length > 1)!;
      const t = m.select.findIndex((s) => s !== null);
      m.select[t] = (m.select[t]! + 1) % m.sources.length;
    });
    expect(r.match).toBe(false);
  });

  it('catches an output read one iteration off (latency ignored)', () => {
    const r = mutate((c) => {
      c.outputs[0].lag += 1;
      c.outputs[0].validAfterIterations += 1;
    });
    expect(r.match).toBe(false);
    expect(r.firstMismatch!.output).toBe(c0output());
  });

  it('catches a pipeline shorter than the plan assumes', () => {
    const r = mutate((c) => {
      const u = c.units.find((x) => x.stages > 1)!;
      u.stages -= 1;
    });
    expect(r.match).toBe(false);
  });

  function c0output(): string {
    return base.outputs[0].node;
  }
});
