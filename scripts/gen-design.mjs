#!/usr/bin/env node
// Generates large, valid, foldable design files for examples and the benchmark: a bank of
// receiver channels, each a cascade of resonator sections, written in flow-style lines the way
// people write designs by hand. Every loop keeps a retimable placement, so retiming is feasible.
//
//   node scripts/gen-design.mjs --edges 100000 [--seed 7] [--factor 8] [--name NAME] [--out FILE]
//   node scripts/gen-design.mjs --fir 10000 --factor 1000 [--out FILE]   (a transposed-form FIR instead)
//
// One section (4 nodes, 6 edges), fed by `prev` (the channel input or the previous section):
//   a = prev + m          (add)      m = 0.9 * a[n-1]   (mul, the resonator's feedback)
//   g = gain * a          (mul)      b = g + prev[n-1]  (add, the section's output)
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

/** Small deterministic generator (mulberry32), so a seed always gives the same file. */
function random(seed) {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function shuffle(list, rnd) {
  for (let i = list.length - 1; i > 0; i--) {
    const j = Math.floor(rnd() * (i + 1));
    [list[i], list[j]] = [list[j], list[i]];
  }
  return list;
}

/**
 * @param {{ edges?: number, seed?: number, factor?: number, name?: string, description?: string, sectionsPerChannel?: number }} opts
 * @returns {{ text: string, nodes: number, edges: number, units: number, channels: number }}
 */
export function generateDesign(opts = {}) {
  const target = Math.max(7, Math.floor(opts.edges ?? 3000));
  const N = opts.factor ?? 8;
  const rnd = random(opts.seed ?? 1);
  const perChannel = opts.sectionsPerChannel ?? 25;
  const ADD_STAGES = 1;
  const MUL_STAGES = 2;

  // Channels of `perChannel` sections; each channel adds one output tap edge.
  const channels = Math.max(1, Math.ceil(target / (6 * perChannel + 1)));
  const sectionsTotal = Math.max(channels, Math.floor((target - channels) / 6));
  const sectionsOf = Array.from({ length: channels }, (_, c) => Math.floor(sectionsTotal / channels) + (c < sectionsTotal % channels ? 1 : 0));

  const nodes = [];
  const edges = [];
  const adds = [];
  const loops = []; // [a, m] pairs whose relative placement must stay retimable
  const gains = [];
  for (let c = 0; c < channels; c++) {
    const x = `x${c}`;
    nodes.push(`  - { id: ${x}, kind: input }`);
    let prev = x;
    for (let s = 0; s < sectionsOf[c]; s++) {
      const p = `c${c}s${s}`;
      const [a, m, g, b] = [`${p}a`, `${p}m`, `${p}g`, `${p}b`];
      const fb = (0.5 + 0.45 * rnd()).toFixed(4);
      const gain = (0.25 + rnd()).toFixed(4);
      nodes.push(`  - { id: ${a}, kind: add }`, `  - { id: ${m}, kind: mul, coefficient: ${fb} }`, `  - { id: ${g}, kind: mul, coefficient: ${gain} }`, `  - { id: ${b}, kind: add }`);
      edges.push(
        `  - { from: ${prev}, to: ${a} }`,
        `  - { from: ${m}, to: ${a}, port: 1 }`,
        `  - { from: ${a}, to: ${m}, delays: 1 }`,
        `  - { from: ${a}, to: ${g} }`,
        `  - { from: ${g}, to: ${b} }`,
        `  - { from: ${prev}, to: ${b}, delays: 1, port: 1 }`,
      );
      adds.push(a, b);
      loops.push([a, m]);
      gains.push(g);
      prev = b;
    }
    nodes.push(`  - { id: y${c}, kind: output }`);
    edges.push(`  - { from: ${prev}, to: y${c} }`);
  }

  // Units: as few as the operations need, filled evenly (every unit nearly full), each
  // operation in a random free slot, so many folded delays come out negative.
  const fill = (ops, ok) => {
    const count = Math.max(1, Math.ceil(ops.length / N));
    const rows = Array.from({ length: count }, () => new Array(N).fill('~'));
    const freeSlots = rows.map(() => shuffle(Array.from({ length: N }, (_, s) => s), rnd));
    ops.forEach((op, i) => {
      // Round robin over the units; a constrained operation may move on to a later unit.
      for (let t = 0; t < count; t++) {
        const u = (i + t) % count;
        const k = freeSlots[u].findIndex((s) => ok(op, s));
        if (k >= 0) {
          const s = freeSlots[u].splice(k, 1)[0];
          rows[u][s] = op.id;
          slotOf.set(op.id, s);
          return;
        }
      }
      rows.push(new Array(N).fill('~'));
      freeSlots.push(shuffle(Array.from({ length: N }, (_, s) => s), rnd));
      const u = rows.length - 1;
      const k = freeSlots[u].findIndex((s) => ok(op, s));
      const s = freeSlots[u].splice(k, 1)[0];
      rows[u][s] = op.id;
      slotOf.set(op.id, s);
    });
    return rows;
  };
  const slotOf = new Map();
  const addSets = fill(shuffle(adds, rnd).map((id) => ({ id, a: null })), () => true);

  // Multipliers: a loop's m goes where floor(D(a->m)/N) + floor(D(m->a)/N) >= 0 holds, with
  // delta = slot(a) - slot(m); that excludes the few deltas that make the sum -1.
  const retimable = (delta) => Math.floor((N - ADD_STAGES - delta) / N) + Math.floor((delta - MUL_STAGES) / N) >= 0;
  const work = shuffle([...loops.map(([a, m]) => ({ id: m, a })), ...gains.map((g) => ({ id: g, a: null }))], rnd);
  // Constrained operations first, so the free slots that are left suit the unconstrained ones.
  work.sort((p, q) => (p.a === null ? 1 : 0) - (q.a === null ? 1 : 0));
  const mulSets = fill(work, (op, s) => (op.a === null ? true : retimable(slotOf.get(op.a) - s)));

  const units = [];
  const sets = [];
  addSets.forEach((row, i) => {
    units.push(`  - { id: ADD${i}, kind: add, stages: ${ADD_STAGES} }`);
    sets.push(`    ADD${i}: [${row.join(', ')}]`);
  });
  mulSets.forEach((row, i) => {
    units.push(`  - { id: MUL${i}, kind: mul, stages: ${MUL_STAGES} }`);
    sets.push(`    MUL${i}: [${row.join(', ')}]`);
  });

  const name = opts.name ?? `generated-${edges.length}`;
  const description =
    opts.description ?? `Generated bank of ${channels} receiver channels of cascaded resonator sections (${edges.length} edges), seed ${opts.seed ?? 1}.`;
  const text = [
    'format: pleat/1',
    `name: ${name}`,
    `description: ${JSON.stringify(description)}`,
    'clock_ns: 2',
    'kinds:',
    '  add: { time: 1 }',
    '  mul: { time: 2 }',
    'units:',
    ...units,
    'nodes:',
    ...nodes,
    'edges:',
    ...edges,
    'folding:',
    `  factor: ${N}`,
    '  sets:',
    ...sets,
    '',
  ].join('\n');
  return { text, nodes: nodes.length, edges: edges.length, units: units.length, channels };
}

/**
 * A transposed-form FIR filter of `taps` taps, folded by `factor`: x feeds every tap (a gain),
 * and a chain of adders sums them with one delay between adders, s_k = t_k + s_{k+1}[n-1] (the
 * form hardware uses: one register per tap, not a delay line per tap). A graph without loops,
 * so every placement is retimable; taps and adders fill their units in order.
 * @param {{ taps: number, factor?: number, seed?: number, name?: string }} opts
 * @returns {{ text: string, nodes: number, edges: number, units: number }}
 */
export function generateFir(opts) {
  const T = Math.max(2, Math.floor(opts.taps));
  const N = opts.factor ?? 8;
  const rnd = random(opts.seed ?? 1);
  const nodes = ['  - { id: x, kind: input }'];
  const edges = [];
  for (let k = 0; k < T; k++) {
    nodes.push(`  - { id: t${k}, kind: mul, coefficient: ${((rnd() - 0.5) / 4).toFixed(5)} }`);
    edges.push(`  - { from: x, to: t${k} }`);
  }
  // s_{T-2} = t_{T-2} + t_{T-1}[n-1]; s_k = t_k + s_{k+1}[n-1]; y = s_0.
  for (let k = T - 2; k >= 0; k--) {
    nodes.push(`  - { id: s${k}, kind: add }`);
    edges.push(`  - { from: t${k}, to: s${k} }`, `  - { from: ${k === T - 2 ? `t${T - 1}` : `s${k + 1}`}, to: s${k}, delays: 1, port: 1 }`);
  }
  nodes.push('  - { id: y, kind: output }');
  edges.push('  - { from: s0, to: y }');
  const units = [];
  const sets = [];
  const place = (prefix, kind, stages, ids) => {
    for (let u = 0; u * N < ids.length; u++) {
      const row = Array.from({ length: N }, (_, s) => ids[u * N + s] ?? '~');
      units.push(`  - { id: ${prefix}${u}, kind: ${kind}, stages: ${stages} }`);
      sets.push(`    ${prefix}${u}: [${row.join(', ')}]`);
    }
  };
  place('MUL', 'mul', 2, Array.from({ length: T }, (_, k) => `t${k}`));
  place('ADD', 'add', 1, Array.from({ length: T - 1 }, (_, k) => `s${T - 2 - k}`));
  const name = opts.name ?? `fir-${T}`;
  const text = [
    'format: pleat/1',
    `name: ${name}`,
    `description: ${JSON.stringify(`Generated transposed-form FIR filter of ${T} taps, folding factor ${N}, seed ${opts.seed ?? 1}.`)}`,
    'clock_ns: 2',
    'kinds:',
    '  add: { time: 1 }',
    '  mul: { time: 2 }',
    'units:',
    ...units,
    'nodes:',
    ...nodes,
    'edges:',
    ...edges,
    'folding:',
    `  factor: ${N}`,
    '  sets:',
    ...sets,
    '',
  ].join('\n');
  return { text, nodes: nodes.length, edges: edges.length, units: units.length };
}

function main(argv) {
  const opts = {};
  let fir = 0;
  let out = null;
  for (let i = 0; i < argv.length; i++) {
    const [k, v] = [argv[i], argv[i + 1]];
    if (k === '--edges') opts.edges = Number(v);
    else if (k === '--seed') opts.seed = Number(v);
    else if (k === '--factor') opts.factor = Number(v);
    else if (k === '--name') opts.name = v;
    else if (k === '--description') opts.description = v;
    else if (k === '--sections') opts.sectionsPerChannel = Number(v);
    else if (k === '--out') out = v;
    else if (k === '--fir') fir = Number(v);
    else {
      console.error(`gen-design: unknown argument ${k}`);
      process.exit(2);
    }
    i++;
  }
  const d = fir > 0 ? generateFir({ ...opts, taps: fir }) : generateDesign(opts);
  if (out) {
    writeFileSync(out, d.text);
    console.error(`gen-design: ${out}: ${d.nodes} nodes, ${d.edges} edges, ${d.units} units`);
  } else process.stdout.write(d.text);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) main(process.argv.slice(2));
