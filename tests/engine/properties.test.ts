// Theorems of folding checked on random valid designs with fast-check (npm): what a feasible
// retiming guarantees, what retiming keeps, what factorLowerBound rules out, and what the
// register allocation must satisfy. Each property is stated from docs/analysis.md, not from the code.
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import findCircuits from 'elementary-circuits-directed-graph';
import { analyze } from '../../shared/analysis/analyze';
import type { Analysis, Design } from '../../shared/types';
import { refold } from '../support/designs';
import { randomDesign } from '../support/randomDesign';
import { allocationProblems, expectedRows, type TestLifetime } from '../oracles/lifetimes';

const seeds = fc.integer({ min: 1, max: 2 ** 31 - 1 });

/** Slot and stages of every node, read from the design by the Notation of docs/analysis.md. */
function placement(design: Design) {
  const at = new Map<string, { slot: number | undefined; stages: number }>();
  for (const n of design.nodes) if (n.kind === 'input' || n.kind === 'output') at.set(n.id, { slot: n.slot, stages: 0 });
  for (const u of design.units) {
    (design.folding.sets[u.id] ?? []).forEach((id, p) => id !== null && at.set(id, { slot: p, stages: u.stages }));
  }
  return at;
}

describe('properties of folding on random designs (fast-check)', () => {
  it('a feasible retiming satisfies every constraint and keeps every delay nonnegative', () => {
    fc.assert(
      fc.property(seeds, (seed) => {
        const design = randomDesign(seed, { maxOps: 10 });
        const a = analyze(design);
        if (!a.retiming.feasible) return;
        const r = a.retiming.values;
        const N = design.folding.factor;
        const kinds = new Map(design.nodes.map((n) => [n.id, n.kind]));
        expect(Object.keys(r).sort()).toEqual(design.nodes.map((n) => n.id).sort());
        a.edges.forEach((e, k) => {
          // w_r = w + r(V) - r(U) >= 0 (docs/analysis.md, retiming for folding).
          expect(e.retimedDelays).toBe(design.edges[k].delays + r[e.to] - r[e.from]);
          expect(e.retimedDelays).toBeGreaterThanOrEqual(0);
          if (e.foldedDelay !== null) {
            // D_F moves by N per delay moved, and ends nonnegative.
            expect(e.retimedFoldedDelay).toBe(e.foldedDelay + N * (e.retimedDelays - e.delays));
            expect(e.retimedFoldedDelay).toBeGreaterThanOrEqual(0);
          } else expect(e.retimedFoldedDelay).toBeNull();
        });
        // Inputs share one value (0), outputs one, both equal with fixed latency.
        const ins = design.nodes.filter((n) => kinds.get(n.id) === 'input').map((n) => r[n.id]);
        const outs = design.nodes.filter((n) => kinds.get(n.id) === 'output').map((n) => r[n.id]);
        for (const v of ins) expect(v).toBe(0);
        for (const v of outs) expect(v).toBe(outs[0]);
        if (ins.length > 0 && outs.length > 0) {
          expect(a.retiming.latencyAdded).toBe(outs[0] - ins[0]);
          if (design.folding.latency === 'fixed') expect(outs[0]).toBe(ins[0]);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('retiming keeps the total folded delay of every loop (loops by Johnson 1975)', () => {
    let loopsChecked = 0;
    fc.assert(
      fc.property(seeds, (seed) => {
        const design = randomDesign(seed, { maxOps: 7 });
        const a = analyze(design);
        if (!a.retiming.feasible || !a.retiming.needed) return;
        const index = new Map(design.nodes.map((n, i) => [n.id, i]));
        const edgeOf = new Map<string, Analysis['edges'][number]>();
        const adjacency: number[][] = design.nodes.map(() => []);
        for (const e of a.edges) {
          const key = `${index.get(e.from)},${index.get(e.to)}`;
          if (edgeOf.has(key)) continue;
          edgeOf.set(key, e);
          if (e.from !== e.to) adjacency[index.get(e.from)!].push(index.get(e.to)!);
        }
        // Loops from elementary-circuits-directed-graph (npm); self-loops on their own.
        const loops = findCircuits(adjacency).map((c) => c.slice(0, -1));
        for (const e of a.edges) if (e.from === e.to) loops.push([index.get(e.from)!]);
        for (const loop of loops) {
          let before = 0;
          let after = 0;
          for (let k = 0; k < loop.length; k++) {
            const e = edgeOf.get(`${loop[k]},${loop[(k + 1) % loop.length]}`)!;
            before += e.foldedDelay!;
            after += e.retimedFoldedDelay!;
          }
          // Retiming adds r(V) - r(U) delays per edge; around a loop they cancel.
          expect(after).toBe(before);
          loopsChecked++;
        }
      }),
      { numRuns: 200 },
    );
    expect(loopsChecked).toBeGreaterThan(50);
  });

  it('no folding factor below factorLowerBound is feasible, whatever the positions', () => {
    let tried = 0;
    fc.assert(
      fc.property(seeds, (seed) => {
        // Deep pipelines and few delays make the bound bite above the largest set.
        const design = randomDesign(seed, { maxOps: 8, maxStages: 6, maxDelays: 1, loopiness: 0.6 });
        const a = analyze(design);
        const largestSet = Math.max(
          1,
          ...Object.values(design.folding.sets).map((s) => s.filter((x) => x !== null).length),
        );
        for (let N = largestSet; N < a.factorLowerBound; N++) {
          for (let attempt = 0; attempt < 3; attempt++) {
            const b = analyze(refold(design, N, seed * 7 + N * 31 + attempt));
            // docs/analysis.md: a loop with N*delays < stages has a negative total folded delay,
            // which retiming cannot change, so no retiming exists.
            expect(b.retiming.feasible, `seed ${seed}, N = ${N}`).toBe(false);
            expect(b.registers).toBeNull();
            tried++;
          }
        }
      }),
      { numRuns: 200 },
    );
    expect(tried).toBeGreaterThan(50);
  });

  it('the allocation holds every live value for its whole lifetime in exactly the lifetime minimum', () => {
    let tables = 0;
    fc.assert(
      fc.property(seeds, (seed) => {
        const design = randomDesign(seed, { maxOps: 9, maxSlack: 3 });
        const a = analyze(design);
        if (!a.retiming.feasible) return;
        const N = design.folding.factor;
        // Lifetimes from the reported retimed folded delays, by docs/analysis.md: tIn = slot + stages,
        // tOut = tIn + largest folded delay leaving the node; a held input gives one variable
        // per edge with delays, from the consumer's slot.
        const at = placement(design);
        const vars: TestLifetime[] = [];
        const longest = new Map<string, number>();
        const perConsumer = new Map<string, number>();
        a.edges.forEach((e) => {
          if (e.retimedFoldedDelay === null) return;
          const from = design.nodes.find((n) => n.id === e.from)!;
          if (from.kind === 'input' && from.slot === undefined) {
            if (e.retimedDelays === 0) return;
            const seen = (perConsumer.get(`${e.from}->${e.to}`) ?? 0) + 1;
            perConsumer.set(`${e.from}->${e.to}`, seen);
            const tIn = at.get(e.to)!.slot!;
            const name = seen === 1 ? `${e.from}->${e.to}` : `${e.from}->${e.to}#${seen}`;
            vars.push({ variable: name, tIn, tOut: tIn + e.retimedFoldedDelay });
          } else longest.set(e.from, Math.max(longest.get(e.from) ?? 0, e.retimedFoldedDelay));
        });
        for (const [id, d] of longest) {
          if (d === 0) continue;
          const p = at.get(id)!;
          vars.push({ variable: id, tIn: p.slot! + p.stages, tOut: p.slot! + p.stages + d });
        }
        const minimum = Math.max(0, ...expectedRows(vars, N).map((row) => row.length));
        expect(a.registers!.minimum).toBe(minimum);
        if (!a.allocation) return;
        expect(a.allocation.registers).toBe(minimum);
        expect(allocationProblems(a.allocation, vars)).toEqual([]);
        tables++;
      }),
      { numRuns: 300 },
    );
    expect(tables).toBeGreaterThan(100);
  });
});
