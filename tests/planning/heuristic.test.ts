// The heuristic planner on the project's examples and on generated designs: every plan passes the
// engine's own check, keeps its pins, and never needs more registers than the hand-written or
// generated folding of the same design (the generator's sets, scored by analyze).
import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { loadDesign } from '../../shared/design/load';
import { analyze } from '../../shared/analysis/analyze';
import { planDesign } from '../../shared/planning/plan';
import { sweepDesign } from '../../shared/planning/sweep';
import { randomDesign } from '../support/randomDesign';
import type { Design } from '../../shared/types';
import { planProblems } from '../oracles/planChecks';
import { generateDesign } from '../../scripts/gen-design.mjs';

const examples = fileURLToPath(new URL('../../examples/', import.meta.url));
const bare = (d: Design): Design => ({ ...d, folding: { ...d.folding, sets: {} } });
const opsOf = (d: Design) => d.nodes.filter((n) => n.kind !== 'input' && n.kind !== 'output');

describe('examples/: the heuristic from no sets against the written folding', () => {
  for (const file of readdirSync(examples).filter((f) => f.endsWith('.fold.yaml'))) {
    it(file, async () => {
      const { design } = loadDesign(readFileSync(examples + file, 'utf8'));
      expect(design).not.toBeNull();
      const own = analyze(design!);
      const plan = await planDesign(bare(design!), { factor: design!.folding.factor, units: design!.units, objective: 'registers', timeLimitSeconds: 20 });
      if (!own.retiming.feasible && design!.folding.factor < own.factorLowerBound) {
        // common practice, no source: below the folding-factor bound no placement can work
        expect(plan.status).toBe('infeasible');
        expect(plan.reasons.join(' ')).toContain(`lower bound ${own.factorLowerBound}`);
        expect(plan.suggestion?.factor).toBeGreaterThanOrEqual(own.factorLowerBound);
        return;
      }
      expect(plan.status).not.toBe('infeasible');
      expect(planProblems(design!, plan)).toEqual([]);
      // the written folding, scored by the engine, is a plan too: the planner must not do worse
      expect(plan.objective!.registers).toBeLessThanOrEqual(own.registers!.minimum);
    }, 120_000);
  }
});

describe('generated designs (scripts/gen-design.mjs)', () => {
  it('a 10,000-operation bank: a feasible plan, never worse than the generated sets', async () => {
    const { text } = generateDesign({ edges: 15_000, seed: 5 });
    const { design } = loadDesign(text);
    expect(opsOf(design!).length).toBeGreaterThanOrEqual(9_900);
    const own = analyze(design!, { maxAllocationCells: 0 });
    const plan = await planDesign(bare(design!), { factor: design!.folding.factor, units: design!.units, objective: 'registers', timeLimitSeconds: 120 });
    expect(plan.status).not.toBe('infeasible');
    expect(plan.method).toMatch(/^heuristic/);
    const planned: Design = { ...design!, folding: { ...design!.folding, sets: plan.sets } };
    const a = analyze(planned, { maxAllocationCells: 0 });
    expect(a.retiming.feasible).toBe(true);
    expect(a.edges.every((e) => e.retimedFoldedDelay === null || e.retimedFoldedDelay >= 0)).toBe(true);
    expect(a.registers!.minimum).toBe(plan.objective!.registers);
    expect(a.registers!.minimum).toBeLessThanOrEqual(own.registers!.minimum);
  }, 600_000);
});

describe('pins, bounds and the reasons of infeasibility', () => {
  it('keeps every pin where the design placed it (random designs, half the entries kept)', async () => {
    let checked = 0;
    for (let seed = 1; checked < 12 && seed < 200; seed++) {
      const d = randomDesign(seed, { maxOps: 8, maxSlack: 2 });
      if (!analyze(d).retiming.feasible) continue; // the pins must admit a plan: take them from a feasible one
      const pins: Record<string, (string | null)[]> = {};
      let k = 0;
      for (const [unit, list] of Object.entries(d.folding.sets)) pins[unit] = list.map((id) => (id !== null && k++ % 2 === 0 ? id : null));
      const pinned: Design = { ...d, folding: { ...d.folding, sets: pins } };
      const plan = await planDesign(pinned, { factor: d.folding.factor, units: d.units, objective: 'registers', timeLimitSeconds: 10 });
      expect(plan.status, `seed ${seed}`).not.toBe('infeasible');
      expect(planProblems(d, plan, pins), `seed ${seed}`).toEqual([]);
      expect(plan.pins.sort()).toEqual(Object.values(pins).flat().filter((x): x is string => x !== null).sort());
      checked++;
    }
    expect(checked).toBe(12);
  }, 300_000);

  it('too few units: says which kind lacks slots and how many units would do', async () => {
    const { design } = loadDesign(readFileSync(examples + 'sensor-frontend.fold.yaml', 'utf8'));
    const d = design!;
    const N = d.folding.factor;
    const byKind = new Map<string, number>();
    for (const n of opsOf(d)) byKind.set(n.kind, (byKind.get(n.kind) ?? 0) + 1);
    const [kind, count] = [...byKind].sort((x, y) => y[1] - x[1])[0];
    expect(count).toBeGreaterThan(1);
    // one unit of that kind at N = count - 1 runs at most count - 1 of its operations (common practice, no source)
    const units = d.units.filter((u) => u.kind !== kind).concat([{ id: 'ONLY', kind, stages: 1 }]);
    const plan = await planDesign(bare(d), { factor: count - 1, units, objective: 'registers', timeLimitSeconds: 5 });
    expect(plan.status).toBe('infeasible');
    expect(plan.sets).toEqual({});
    expect(plan.reasons.join(' ')).toContain(`kind \`${kind}\` has ${count} operations`);
    expect(plan.suggestion?.units?.[kind]).toBe(Math.ceil(count / (count - 1)));
    void N;
  });
});

describe('sweep', () => {
  it('per N the fewest units that admit a plan, each plan checked, and a Pareto front that no row dominates', async () => {
    const { design } = loadDesign(readFileSync(examples + 'equaliser-retimed.fold.yaml', 'utf8'));
    const d = bare(design!);
    const rows = await sweepDesign(d, { factors: [1, 2, 3, 4, 5, 6], units: 'auto', objective: 'registers', timeLimitSeconds: 30 });
    expect(rows.map((r) => r.factor)).toEqual([1, 2, 3, 4, 5, 6]);
    const ops = new Map<string, number>();
    for (const n of opsOf(d)) ops.set(n.kind, (ops.get(n.kind) ?? 0) + 1);
    for (const r of rows) {
      if (r.plan.status === 'infeasible') continue;
      expect(planProblems(d, r.plan)).toEqual([]);
      for (const [kind, count] of ops) expect(r.units[kind]).toBeGreaterThanOrEqual(Math.ceil(count / r.factor));
      expect(r.samplePeriodNs).toBe(d.clockNs !== undefined ? d.clockNs * r.factor : null);
    }
    const front = rows.filter((r) => r.pareto);
    expect(front.length).toBeGreaterThan(0);
    // definition of the Pareto front (common practice, no source), restated here
    const key = (r: (typeof rows)[number]) => [r.plan.units.length, r.plan.objective!.registers, r.samplePeriodNs ?? r.factor];
    const ok = rows.filter((r) => r.plan.status !== 'infeasible');
    for (const r of ok) {
      const a = key(r);
      const dominated = ok.some((o) => o !== r && key(o).every((b, i) => b <= a[i]) && key(o).some((b, i) => b < a[i]));
      expect(r.pareto, `N = ${r.factor}`).toBe(!dominated);
    }
  }, 300_000);
});

describe('fixed latency and cancelling', () => {
  // An invented two-operation path: input -> adder (2 stages) -> output, both boundary slots at 0.
  const path = (latency: 'free' | 'fixed'): Design => ({
    format: 'pleat/1',
    name: 'tight-path',
    kinds: {},
    units: [{ id: 'A', kind: 'add', stages: 2 }],
    nodes: [
      { id: 'x', kind: 'input', slot: 0 },
      { id: 'p', kind: 'add' },
      { id: 'q', kind: 'add' },
      { id: 'y', kind: 'output', slot: 0 },
    ],
    edges: [
      { from: 'x', to: 'p', delays: 0 },
      { from: 'p', to: 'q', delays: 0 },
      { from: 'q', to: 'y', delays: 0 },
    ],
    folding: { factor: 2, sets: {}, latency },
  });

  it('fixed latency: a path from input to output longer than the slots allow is infeasible, with the reason', async () => {
    // common practice, no source: with r(inputs) = r(outputs), the 4 stages of the path must fit
    // between input slot 0 and output slot 0 of the same iteration, which no N allows
    const plan = await planDesign(path('fixed'), { factor: 2, units: path('fixed').units, objective: 'registers', timeLimitSeconds: 5 });
    expect(plan.status).toBe('infeasible');
    expect(plan.reasons.join(' ')).toContain('fixed latency');
    expect(plan.suggestion?.factor).toBeUndefined();
  });

  it('free latency: the same path gets a plan that adds latency', async () => {
    const d = path('free');
    const plan = await planDesign(d, { factor: 2, units: d.units, objective: 'registers', timeLimitSeconds: 5 });
    expect(plan.status).not.toBe('infeasible');
    expect(planProblems(d, plan)).toEqual([]);
    expect(plan.objective!.latencyAdded).toBeGreaterThan(0);
  });

  it('a cancelled plan says so instead of claiming that no plan exists', async () => {
    const { design } = loadDesign(readFileSync(examples + 'channelizer-taps.fold.yaml', 'utf8'));
    const plan = await planDesign(bare(design!), { factor: design!.folding.factor, units: design!.units, objective: 'registers', timeLimitSeconds: 600, signal: { aborted: true } });
    expect(plan.status).toBe('infeasible');
    expect(plan.reasons.join(' ')).toContain('cancelled');
  });
});
