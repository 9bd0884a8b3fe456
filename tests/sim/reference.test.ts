// The reference evaluation of the unfolded DFG and the two number systems, against results
// known outside the project.
import { describe, expect, it } from 'vitest';
import { loadDesign } from '../../shared/design/load';
import { locate } from '../../shared/design/positions';
import { evaluateReference, resolveArithmetic } from '../../shared/hardware/reference';
import { decimalOf, exactArithmetic, fixedArithmetic, quantizeCoefficient, type Decimal } from '../../shared/hardware/arith';
import type { Design } from '../../shared/types';

function load(yaml: string): Design {
  const { design, diagnostics } = loadDesign(yaml);
  if (!design) throw new Error(JSON.stringify(diagnostics));
  return design;
}

function run(design: Design, inputs: Record<string, number[]>, iterations: number) {
  const { graph, diagnostics } = resolveArithmetic(design);
  expect(diagnostics).toEqual([]);
  const ar = exactArithmetic();
  const streams: Record<string, Decimal[]> = {};
  for (const [k, v] of Object.entries(inputs)) streams[k] = v.map((x) => ar.fromInt(BigInt(x)));
  const out = evaluateReference(design, graph!, ar, streams, iterations);
  const shown: Record<string, string[]> = {};
  for (const [k, v] of Object.entries(out.outputs)) shown[k] = v.map((x) => ar.format(x));
  return shown;
}

const impulse = (n: number) => Array.from({ length: n }, (_, i) => (i === 0 ? 1 : 0));

describe('reference evaluation of the unfolded graph', () => {
  it('computes the Fibonacci numbers from an impulse into y[n] = x[n] + y[n-1] + y[n-2]', () => {
    // F(1)..F(20) of OEIS A000045 (values from memory of the sequence: 1, 1, 2, 3, 5, ...).
    const fib = [1, 1, 2, 3, 5, 8, 13, 21, 34, 55, 89, 144, 233, 377, 610, 987, 1597, 2584, 4181, 6765];
    const d = load(`format: pleat/1
name: fib
units: [{ id: A, kind: add, stages: 1 }]
nodes:
  - { id: x, kind: input }
  - { id: s, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: s }
  - { from: s, to: s, delays: 1 }
  - { from: s, to: s, delays: 2 }
  - { from: s, to: y }
folding: { factor: 1, sets: { A: [s] } }
`);
    expect(run(d, { x: impulse(20) }, 20).y).toEqual(fib.map(String));
  });

  it('gives the binomial coefficients from an impulse through (1 + z^-1)^4', () => {
    // Row 4 of Pascal's triangle: 1 4 6 4 1 (common practice, no source).
    const d = load(`format: pleat/1
name: binomial
units: [{ id: A, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: a1, kind: add }
  - { id: a2, kind: add }
  - { id: a3, kind: add }
  - { id: a4, kind: add }
  - { id: y, kind: output }
edges:
  - { from: x, to: a1 }
  - { from: x, to: a1, delays: 1 }
  - { from: a1, to: a2 }
  - { from: a1, to: a2, delays: 1 }
  - { from: a2, to: a3 }
  - { from: a2, to: a3, delays: 1 }
  - { from: a3, to: a4 }
  - { from: a3, to: a4, delays: 1 }
  - { from: a4, to: y }
folding: { factor: 4, sets: { A: [a1, a2, a3, a4] } }
`);
    expect(run(d, { x: impulse(7) }, 7).y).toEqual(['1', '4', '6', '4', '1', '0', '0']);
  });

  it('keeps the decimal coefficients exact: the impulse response of y[n] = x[n] - 0.5 y[n-1] is (-0.5)^n', () => {
    // Geometric impulse response of a one-pole recursion (common practice, no source).
    const d = load(`format: pleat/1
name: one-pole
units:
  - { id: A, kind: add, stages: 0 }
  - { id: M, kind: mul, stages: 0 }
nodes:
  - { id: x, kind: input }
  - { id: s, kind: add }
  - { id: g, kind: mul, coefficient: -0.5 }
  - { id: y, kind: output }
edges:
  - { from: x, to: s }
  - { from: g, to: s, port: 1 }
  - { from: s, to: g, delays: 1 }
  - { from: s, to: y }
folding: { factor: 2, sets: { A: [s], M: [~, g] } }
`);
    const expected = Array.from({ length: 12 }, (_, n) => {
      // (-1)^n / 2^n written as a decimal
      const mag = (1 / 2 ** n).toString();
      return n % 2 === 1 ? `-${mag}` : mag;
    });
    expect(run(d, { x: impulse(12) }, 12).y).toEqual(expected);
    // 0.1 is the decimal the file says, not the nearest double: 0.1 * 3 = 0.3 exactly.
    const ar = exactArithmetic();
    expect(ar.format(ar.scale(ar.fromInt(3n), 0.1))).toBe('0.3');
  });

  it('orders operands by port: sub is the first port minus the others', () => {
    const d = load(`format: pleat/1
name: ports
units: [{ id: A, kind: add, stages: 1 }]
nodes:
  - { id: a, kind: input }
  - { id: b, kind: input }
  - { id: c, kind: input }
  - { id: d, kind: add, op: sub }
  - { id: y, kind: output }
edges:
  - { from: a, to: d, port: 2 }
  - { from: b, to: d }
  - { from: c, to: d, port: 0 }
  - { from: d, to: y }
folding: { factor: 1, sets: { A: [d] } }
`);
    // c (port 0) - b (first free port, 1) - a (port 2)
    expect(run(d, { a: [1], b: [10], c: [100] }, 1).y).toEqual(['89']);
  });

  it('starts from zero state: a delayed input reads zero before iteration 0', () => {
    const d = load(`format: pleat/1
name: delay-line
units: [{ id: A, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: p, kind: add, op: pass }
  - { id: y, kind: output }
edges:
  - { from: x, to: p, delays: 2 }
  - { from: p, to: y }
folding: { factor: 1, sets: { A: [p] } }
`);
    expect(run(d, { x: [5, 6, 7, 8] }, 4).y).toEqual(['0', '0', '5', '6']);
  });

  it('refuses an operation without arithmetic, at its line in the file', () => {
    const text = `format: pleat/1
name: unknown-op
units: [{ id: M, kind: mac, stages: 1 }, { id: A, kind: add, stages: 0 }]
nodes:
  - { id: x, kind: input }
  - { id: m, kind: mac }
  - { id: n, kind: add, op: neg }
  - { id: y, kind: output }
edges:
  - { from: x, to: m }
  - { from: m, to: n }
  - { from: n, to: y }
folding: { factor: 1, sets: { M: [m], A: [n] } }
`;
    const { graph, diagnostics } = resolveArithmetic(load(text));
    expect(graph).toBeNull();
    expect(diagnostics.map((x) => [x.code, x.path])).toEqual([['sim-no-arithmetic', ['nodes', 1]]]);
    const [located] = locate(text, diagnostics);
    expect([located.line, located.column]).toEqual([6, 5]);
  });
});

describe('evaluation order of the reference', () => {
  it('puts every zero-delay edge forward, and names exactly the nodes of a delay-free loop', () => {
    // Brute-force reference written here: a delay-free loop is a circuit of zero-delay edges, found
    // by closing zero-delay reachability transitively (common practice, no source).
    const d = load(`format: pleat/1
name: ordered
units: [{ id: A, kind: add, stages: 0 }]
nodes:
  - { id: y, kind: output }
  - { id: c, kind: add }
  - { id: b, kind: add }
  - { id: a, kind: add }
  - { id: x, kind: input }
edges:
  - { from: x, to: a }
  - { from: a, to: b }
  - { from: b, to: c }
  - { from: c, to: b, delays: 1 }
  - { from: c, to: y }
folding: { factor: 3, sets: { A: [a, b, c] } }
`);
    const ok = resolveArithmetic(d);
    expect(ok.diagnostics).toEqual([]);
    const at = new Map(ok.graph!.order.map((v, k) => [d.nodes[v].id, k]));
    for (const e of d.edges) if (e.delays === 0) expect(at.get(e.from)!).toBeLessThan(at.get(e.to)!);

    // Validation refuses such a file, so the loop is made in memory: c -> b loses its delay.
    const looped: Design = { ...d, edges: d.edges.map((e) => (e.from === 'c' && e.to === 'b' ? { ...e, delays: 0 } : e)) };
    const ids = looped.nodes.map((n) => n.id);
    const reach = ids.map((f) => ids.map((t) => looped.edges.some((e) => e.delays === 0 && e.from === f && e.to === t)));
    for (let k = 0; k < ids.length; k++) for (let i = 0; i < ids.length; i++) for (let j = 0; j < ids.length; j++) if (reach[i][k] && reach[k][j]) reach[i][j] = true;
    const onLoop = ids.filter((_, i) => reach[i][i]);
    expect(onLoop.sort()).toEqual(['b', 'c']);
    const bad = resolveArithmetic(looped);
    expect(bad.graph).toBeNull();
    expect(bad.diagnostics.map((x) => x.code)).toEqual(['sim-delay-free-loop']);
    expect(bad.diagnostics[0].message).toBe(`a loop without delays runs through ${ids.filter((id) => onLoop.includes(id)).join(', ')}: it cannot be evaluated`);
  });
});

describe('fixed-point arithmetic of the RTL', () => {
  const ar = fixedArithmetic({ width: 16, coefFrac: 14 });

  it('wraps sums and products to W bits (two\'s complement, common practice, no source)', () => {
    expect(ar.add(32767n, 1n)).toBe(-32768n);
    expect(ar.sub(-32768n, 1n)).toBe(32767n);
    expect(ar.neg(-32768n)).toBe(-32768n);
    expect(ar.mul(300n, 300n)).toBe(BigInt.asIntN(16, 90000n)); // 90000 - 65536 = 24464
    expect(ar.mul(300n, 300n)).toBe(24464n);
  });

  it('quantises coefficients to the nearest multiple of 2^-F, ties away from zero', () => {
    expect(quantizeCoefficient(-0.5, 14)).toBe(-8192n);
    expect(quantizeCoefficient(0.1, 14)).toBe(1638n); // 1638.4
    expect(quantizeCoefficient(1.8207, 14)).toBe(29830n); // 29830.3488
    expect(quantizeCoefficient(0.5, 0)).toBe(1n);
    expect(quantizeCoefficient(-0.5, 0)).toBe(-1n);
    expect(quantizeCoefficient(2.5, 0)).toBe(3n);
  });

  it('shifts a gain product right arithmetically: rounding toward minus infinity, as Verilog >>> on a signed value', () => {
    // IEEE 1364-2001, shift operators: >>> fills with the sign bit on a signed operand (from memory).
    expect(ar.scale(3n, -0.5)).toBe(-2n); // -1.5 -> -2
    expect(ar.scale(3n, 0.5)).toBe(1n); // 1.5 -> 1
    expect(ar.scale(-1n, 0.25)).toBe(-1n); // -0.25 -> -1
  });

  it('reads a coefficient as the decimal written in the file', () => {
    expect(decimalOf(-1.25)).toEqual({ m: -125n, e: 2 });
    expect(decimalOf(1e-7)).toEqual({ m: 1n, e: 7 });
    expect(decimalOf(42)).toEqual({ m: 42n, e: 0 });
  });
});
