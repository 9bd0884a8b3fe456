// The per-design comparison on its own (no database). Tolerance is relative to the base value:
// our convention, written in docs/server.md (common practice for regression gates, no source).
import { describe, expect, it } from 'vitest';
import { compareDesigns, type DesignRow } from './compare';

const row = (name: string, o: Partial<DesignRow> = {}): DesignRow => ({
  run_id: 1, design_name: name, file: `${name}.fold.yaml`, status: 'pass', utilization: 0.8, register_minimum: 10,
  negative_edge_count: 0, retiming_feasible: true, violation_count: 0, factor: 4, unit_count: 3, latency_added: 0, ...o,
});

describe('compareDesigns', () => {
  it('flags a utilization drop only past the tolerance', () => {
    // 0.80 -> 0.77 is a 3.75% drop; 0.80 -> 0.75 a 6.25% drop; tolerance 5%.
    expect(compareDesigns([row('a', { utilization: 0.77 })], [row('a')], 0.05)[0]!.regressions).toEqual([]);
    expect(compareDesigns([row('a', { utilization: 0.75 })], [row('a')], 0.05)[0]!.regressions).toEqual(['utilization']);
  });

  it('flags a register minimum growth only past the tolerance, and any growth from zero', () => {
    expect(compareDesigns([row('a', { register_minimum: 10 })], [row('a')], 0)[0]!.regressions).toEqual([]);
    expect(compareDesigns([row('a', { register_minimum: 11 })], [row('a')], 0.1)[0]!.regressions).toEqual([]);
    expect(compareDesigns([row('a', { register_minimum: 12 })], [row('a')], 0.1)[0]!.regressions).toEqual(['registerMinimum']);
    expect(compareDesigns([row('a', { register_minimum: 1 })], [row('a', { register_minimum: 0 })], 0.5)[0]!.regressions).toEqual(['registerMinimum']);
  });

  it('treats improvements as no regression and reports signed deltas', () => {
    const [d] = compareDesigns([row('a', { utilization: 0.9, register_minimum: 6 })], [row('a')], 0);
    expect(d!.regressions).toEqual([]);
    expect(d!.utilization.delta).toBeCloseTo(0.1, 12);
    expect(d!.registerMinimum.delta).toBe(-4);
  });

  it('flags pass -> fail or error, and more violations', () => {
    const [d] = compareDesigns([row('a', { status: 'error', utilization: null, register_minimum: null, violation_count: 0 })], [row('a')], 0.05);
    expect(d!.regressions).toEqual(['status']);
    expect(d!.utilization).toEqual({ current: null, base: 0.8, delta: null });
    const [f] = compareDesigns([row('a', { status: 'fail', violation_count: 2 })], [row('a', { status: 'fail', violation_count: 1 })], 0.05);
    expect(f!.regressions).toEqual(['violations']);
  });

  it("carries the plan's own figures beside the base: factor, units, negative folded delays, latency, retiming", () => {
    const [d] = compareDesigns(
      [row('a', { factor: 6, unit_count: 2, negative_edge_count: 3, retiming_feasible: false, latency_added: 1 })],
      [row('a')],
      0.05,
    );
    expect(d!.factor).toEqual({ current: 6, base: 4, delta: 2 });
    expect(d!.units).toEqual({ current: 2, base: 3, delta: -1 });
    expect(d!.negativeEdges).toEqual({ current: 3, base: 0, delta: 3 });
    expect(d!.latencyAdded).toEqual({ current: 1, base: 0, delta: 1 });
    expect(d!.retimingFeasible).toEqual({ current: false, base: true });
  });

  it('matches designs by name and lists added and removed ones', () => {
    const out = compareDesigns([row('new'), row('kept')], [row('kept'), row('old')], 0.05);
    expect(out.map((d) => [d.name, d.presence])).toEqual([['new', 'added'], ['kept', 'kept'], ['old', 'removed']]);
    expect(out[0]!.regressions).toEqual([]);
  });
});
