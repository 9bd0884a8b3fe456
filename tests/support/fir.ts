// A transposed-form FIR of T taps folded onto ceil(T / N) multipliers and as many adders, tap k
// at position k mod N: an invented scenario (a long matched filter of a sonar receiver) of the
// shape that needs retiming on every product edge, for the fewest-register retiming at scale.
import type { Design } from '../../shared/types';
import { loadDesign } from '../../shared/design/load';

/** The design file's data (format pleat/1), as a script would write it. */
export function transposedFirFile(taps: number, factor: number): Record<string, unknown> {
  const units: object[] = [];
  const nodes: object[] = [{ id: 'x', kind: 'input' }];
  const edges: object[] = [];
  const sets: Record<string, (string | null)[]> = {};
  const banks = Math.ceil(taps / factor);
  for (let j = 0; j < banks; j++) {
    units.push({ id: `MUL${j}`, kind: 'mul', stages: 1 });
    units.push({ id: `ADD${j}`, kind: 'add', stages: 1 });
    sets[`MUL${j}`] = [];
    sets[`ADD${j}`] = [];
  }
  for (let k = 0; k < taps; k++) {
    nodes.push({ id: `m${k}`, kind: 'mul', coefficient: ((k % 13) - 6) / 16 });
    edges.push({ from: 'x', to: `m${k}`, delays: 0 });
    sets[`MUL${Math.floor(k / factor)}`].push(`m${k}`);
  }
  // a_k = m_k + z^-1 a_(k+1); the last product enters the chain directly.
  for (let k = 0; k < taps - 1; k++) {
    nodes.push({ id: `a${k}`, kind: 'add' });
    edges.push({ from: `m${k}`, to: `a${k}`, delays: 0, port: 0 });
    edges.push({ from: k + 1 < taps - 1 ? `a${k + 1}` : `m${taps - 1}`, to: `a${k}`, delays: 1, port: 1 });
    sets[`ADD${Math.floor(k / factor)}`].push(`a${k}`);
  }
  nodes.push({ id: 'y', kind: 'output' });
  edges.push({ from: 'a0', to: 'y', delays: 0 });
  for (const [u, list] of Object.entries(sets)) if (list.length === 0) delete sets[u];
  return { format: 'pleat/1', name: `sonar-matched-${taps}`, units, nodes, edges, folding: { factor, latency: 'free', sets } };
}

export function transposedFir(taps: number, factor: number): Design {
  const r = loadDesign(JSON.stringify(transposedFirFile(taps, factor)), { syntax: 'json' });
  if (!r.design) throw new Error(`the FIR does not load: ${JSON.stringify(r.diagnostics.slice(0, 3))}`);
  return r.design;
}
