// Test vectors from the integer reference model and the self-checking testbench that drives them
// with the documented port timing (docs/rtl.md, "Timing of the interface").
import type { FixedFormat } from '../arith';
import { evaluateReference, type ResolvedGraph } from '../reference';
import { formatPlan } from '../formats';
import { formatArithmetic } from '../formatArithmetic';
import { inputStreams } from '../foldedSim';
import type { ControlTables, Design } from '../../types';
import { hex, Names } from './names';
import { alignSerialOutputs } from './serial';
import type { PortTiming, RtlBundle } from './types';

export interface TestVectors {
  /** Iterations driven: the samples per output plus the longest wait for a first sample. */
  iterations: number;
  /** Samples checked per output. */
  samples: number;
  seed: number;
  /** Input samples 0..iterations-1 by node id. */
  inputs: Record<string, bigint[]>;
  /** Expected output samples in strobe order: sample firstSample + k at strobe k. */
  outputs: Record<string, bigint[]>;
  /**
   * Members of serial output ports whose first sample the stream interface moves later
   * (`alignSerialOutputs`): their expected samples from that first sample on, by node.
   */
  serialOutputs?: Record<string, bigint[]>;
  /** Results of the reference run that overflowed their format, by node: count and first iteration. */
  overflows: { node: string; count: number; firstIteration: number }[];
}

/**
 * Vectors from the integer reference: the unfolded DFG evaluated in exactly the RTL's fixed-point
 * arithmetic (same quantised coefficients, same truncation), so the match is bit-exact.
 */
export function testVectors(
  design: Design,
  graph: ResolvedGraph,
  control: ControlTables,
  opts: { iterations: number; seed: number; fixed: FixedFormat; formatWidth?: number },
): TestVectors {
  const K = opts.iterations;
  // The formats of the file, or Q(W-1).0 everywhere: the W-bit arithmetic, bit for bit.
  const plan = formatPlan(design, opts.formatWidth ?? opts.fixed.width);
  const ar = formatArithmetic(design, graph, plan, opts.fixed);
  const wait = control.outputs.reduce((m, o) => Math.max(m, Math.max(0, o.lag)), 0);
  const H = K + wait;
  const inputs = inputStreams(design, plan, H, opts.seed, Math.min(opts.fixed.width, 32));
  const aligned = design.serial?.some((p) => p.direction === 'output') ? alignSerialOutputs(design, control).outputs : [];
  let refIterations = H;
  for (const o of [...control.outputs, ...aligned]) refIterations = Math.max(refIterations, o.firstSample + K);
  const ref = evaluateReference(design, graph, ar, inputs, refIterations);
  const outputs: Record<string, bigint[]> = {};
  for (const o of control.outputs) outputs[o.node] = ref.outputs[o.node].slice(o.firstSample, o.firstSample + K);
  const serialOutputs: Record<string, bigint[]> = {};
  for (const o of aligned) serialOutputs[o.node] = ref.outputs[o.node].slice(o.firstSample, o.firstSample + K);
  const overflows = [...ar.overflows].map(([node, o]) => ({ node, count: o.count, firstIteration: o.first })).sort((a, b) => a.firstIteration - b.firstIteration);
  return { iterations: H, samples: K, seed: opts.seed, inputs, outputs, ...(aligned.length ? { serialOutputs } : {}), overflows };
}

/**
 * A self-checking testbench: drives the vectors with the documented input timing, checks every
 * valid strobe (value and cycle) and prints `PASS <top>: ...` or `FAIL <top>: ...`.
 */
export function generateTestbench(bundle: RtlBundle, control: ControlTables, vectors: TestVectors): { name: string; text: string } {
  if (bundle.interface === 'stream') return streamTestbench(bundle, control, vectors);
  const N = control.factor;
  const W = bundle.fixed.width;
  const K = vectors.iterations;
  const tb = bundle.testbench;
  const inPorts = bundle.ports.filter((p) => p.direction === 'input');
  const outPorts = bundle.ports.filter((p) => p.direction === 'output');
  // The testbench's own names stay clear of the design's port names.
  const strobe = (p: PortTiming) => p.valid ?? `${p.port}_valid`;
  const names = new Names(['clk', 'rst', tb, bundle.top, ...bundle.ports.map((p) => p.port), ...outPorts.map(strobe)]);
  const [pW, pK, pCycles, dut, cyc, it, ph, errors, checked] = ['W', 'K', 'CYCLES', 'dut', 'cyc', 'it', 'ph', 'errors', 'checked'].map((n) => names.claim(`tb_${n}`));
  const vec = new Map(inPorts.map((p) => [p.port, names.claim(`tb_in_${p.port}`)]));
  const exp = new Map(outPorts.map((p) => [p.port, names.claim(`tb_expect_${p.port}`)]));
  const seen = new Map(outPorts.map((p) => [p.port, names.claim(`tb_seen_${p.port}`)]));
  let lastStrobe = 0;
  for (const o of control.outputs) lastStrobe = Math.max(lastStrobe, N * (Math.max(0, o.lag) + vectors.samples - 1) + o.cycle + 1);
  const cycles = lastStrobe + 2;
  const L: string[] = [
    `// Self-checking testbench of ${bundle.top}: ${K} iterations of seeded random inputs (seed ${vectors.seed}),`,
    `// ${vectors.samples} samples checked on every output;`,
    '// expected outputs come from the integer reference model of the unfolded graph (same fixed-point',
    '// arithmetic as the RTL). Prints PASS or FAIL with the number of mismatches.',
    `module ${tb};`,
    `  localparam ${pW} = ${W};`,
    `  localparam ${pK} = ${K};`,
    `  localparam ${pCycles} = ${cycles};`,
    '  reg clk;',
    '  reg rst;',
    `  integer ${cyc}, ${it}, ${ph}, ${errors}, ${checked};`,
  ];
  for (const p of inPorts) L.push(`  reg signed [${pW}-1:0] ${p.port};`, `  reg signed [${pW}-1:0] ${vec.get(p.port)} [0:${Math.max(K, 1) - 1}];`);
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    L.push(`  wire signed [${pW}-1:0] ${p.port};`, `  wire ${strobe(p)};`, `  integer ${seen.get(p.port)};`);
    L.push(`  reg signed [${pW}-1:0] ${exp.get(p.port)} [0:${Math.max(n, 1) - 1}];`);
  }
  const conns = ['.clk(clk)', '.rst(rst)', ...inPorts.map((p) => `.${p.port}(${p.port})`), ...outPorts.flatMap((p) => [`.${p.port}(${p.port})`, `.${strobe(p)}(${strobe(p)})`])];
  L.push(`  ${bundle.top} #(.W(${pW})) ${dut} (`, conns.map((c) => `    ${c}`).join(',\n'), '  );', '');
  L.push("  initial clk = 1'b0;", '  always #5 clk = ~clk;', '');
  L.push('  initial begin');
  for (const p of inPorts) vectors.inputs[p.node].forEach((v, i) => L.push(`    ${vec.get(p.port)}[${i}] = ${hex(v, W)};`));
  for (const p of outPorts) vectors.outputs[p.node].forEach((v, i) => L.push(`    ${exp.get(p.port)}[${i}] = ${hex(v, W)};`));
  L.push('  end', '');
  L.push('  initial begin', `    ${errors} = 0;`, `    ${checked} = 0;`, "    rst = 1'b1;");
  for (const p of inPorts) L.push(`    ${p.port} = {${pW}{1'b0}};`);
  for (const p of outPorts) L.push(`    ${seen.get(p.port)} = 0;`);
  L.push(
    '    // Two reset edges; the cycle after the second is cycle 0.',
    '    @(posedge clk);',
    '    @(posedge clk);',
    `    for (${cyc} = 0; ${cyc} < ${pCycles}; ${cyc} = ${cyc} + 1) begin`,
    "      // Mid-cycle: drive this cycle's inputs, look at what the last rising edge loaded.",
    '      @(negedge clk);',
    "      rst = 1'b0;",
    `      ${it} = ${cyc} / ${N};`,
    `      ${ph} = ${cyc} % ${N};`,
  );
  for (const p of inPorts) {
    const v = vec.get(p.port);
    if (p.slot === null || p.slot === undefined) {
      L.push(`      ${p.port} = (${it} < ${pK}) ? ${v}[${it}] : {${pW}{1'b0}};`);
    } else {
      L.push(`      if (${ph} == ${p.slot}) ${p.port} = (${it} < ${pK}) ? ${v}[${it}] : {${pW}{1'b0}};`, `      else ${p.port} = {${pW}{1'bx}}; // not read outside its slot`);
    }
  }
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    const y = p.port;
    const k = seen.get(y)!;
    L.push(
      `      if (${strobe(p)} === 1'b1) begin`,
      `        if (${k} < ${n}) begin`,
      `          ${checked} = ${checked} + 1;`,
      `          if (${cyc} != ${p.firstStrobeCycle} + ${N} * ${k}) begin`,
      `            ${errors} = ${errors} + 1;`,
      `            if (${errors} <= 20) $display("MISMATCH ${p.port}: strobe %0d at cycle %0d, expected at cycle %0d", ${k}, ${cyc}, ${p.firstStrobeCycle} + ${N} * ${k});`,
      `          end else if (${y} !== ${exp.get(y)}[${k}]) begin`,
      `            ${errors} = ${errors} + 1;`,
      `            if (${errors} <= 20) $display("MISMATCH ${p.port}: sample %0d at cycle %0d: expected %0d, got %0d", ${p.firstSample} + ${k}, ${cyc}, ${exp.get(y)}[${k}], ${y});`,
      '          end',
      '        end',
      `        ${k} = ${k} + 1;`,
      `      end else if (${strobe(p)} !== 1'b0) begin`,
      `        ${errors} = ${errors} + 1;`,
      `        if (${errors} <= 20) $display("MISMATCH ${p.port}: valid strobe is %b at cycle %0d", ${strobe(p)}, ${cyc});`,
      '      end',
    );
  }
  L.push('    end');
  L.push(...closing(outPorts, vectors, seen, errors, checked, bundle.top));
  return { name: `${tb}.v`, text: L.join('\n') };
}

/**
 * The testbench of the stream interface: every input offers its samples with random gaps and
 * every output takes them with random stalls (both from $random with a fixed seed); every sample
 * of every output is checked in order against the reference, and all must arrive in time.
 */
function streamTestbench(bundle: RtlBundle, control: ControlTables, vectors: TestVectors): { name: string; text: string } {
  const N = control.factor;
  const W = bundle.fixed.width;
  const K = vectors.iterations;
  const tb = bundle.testbench;
  // Members of serial ports are driven and checked through their port (below), not one by one.
  const inPorts = bundle.ports.filter((p) => p.direction === 'input' && p.serial === undefined);
  const outPorts = bundle.ports.filter((p) => p.direction === 'output' && p.serial === undefined);
  const serial = bundle.serial ?? [];
  const portOfNode = new Map(bundle.ports.map((p) => [p.node, p]));
  const names = new Names(['clk', 'rst', tb, bundle.top, bundle.start!, bundle.busy!, ...bundle.ports.flatMap((p) => [p.port, p.valid!, p.ready!]), ...serial.flatMap((sp) => [sp.port, sp.valid, sp.ready])]);
  const [pW, pK, dut, cyc, errors, checked, seed, limit] = ['W', 'K', 'dut', 'cyc', 'errors', 'checked', 'seed', 'limit'].map((x) => names.claim(`tb_${x}`));
  const vec = new Map(inPorts.map((p) => [p.port, names.claim(`tb_in_${p.port}`)]));
  const sent = new Map(inPorts.map((p) => [p.port, names.claim(`tb_sent_${p.port}`)]));
  const seen = new Map(inPorts.map((p) => [p.port, names.claim(`tb_seen_${p.port}`)]));
  const exp = new Map(outPorts.map((p) => [p.port, names.claim(`tb_expect_${p.port}`)]));
  const got = new Map(outPorts.map((p) => [p.port, names.claim(`tb_got_${p.port}`)]));
  const members = (sp: (typeof serial)[number]) => sp.nodes.map((node) => portOfNode.get(node)!);
  // A serial input's members' samples and a serial output's expected ones, by member port.
  for (const sp of serial) for (const p of members(sp)) (sp.direction === 'input' ? vec : exp).set(p.port, names.claim(`tb_${sp.direction === 'input' ? 'in' : 'expect'}_${p.port}`));
  const moved = new Map(serial.map((sp) => [sp.port, names.claim(`tb_moved_${sp.port}`)]));
  const offered = new Map(serial.filter((sp) => sp.direction === 'input').map((sp) => [sp.port, names.claim(`tb_offered_${sp.port}`)]));
  const expected = (p: PortTiming) => vectors.serialOutputs?.[p.node] ?? vectors.outputs[p.node];
  // Every iteration at most N cycles plus a few of waiting per handshake: stalls are 1 in 3 or 4.
  const cycles = (K + 8) * (N + 8) * 4 + 100;
  const L: string[] = [
    `// Self-checking testbench of the stream interface of ${bundle.top}: ${K} samples per input offered with random`,
    `// gaps, outputs taken with random stalls ($random, seed ${vectors.seed}); ${vectors.samples} samples checked in order on every output`,
    '// against the integer reference model. Prints PASS or FAIL with the number of mismatches.',
    `module ${tb};`,
    `  localparam ${pW} = ${W};`,
    `  localparam ${pK} = ${K};`,
    `  localparam ${limit} = ${cycles};`,
    '  reg clk;',
    '  reg rst;',
    `  reg ${bundle.start!};`,
    `  wire ${bundle.busy!};`,
    `  integer ${cyc}, ${errors}, ${checked}, ${seed};`,
  ];
  for (const p of inPorts) {
    L.push(`  reg signed [${pW}-1:0] ${p.port};`, `  reg ${p.valid};`, `  wire ${p.ready};`, `  integer ${sent.get(p.port)}, ${seen.get(p.port)};`);
    L.push(`  reg signed [${pW}-1:0] ${vec.get(p.port)} [0:${Math.max(K, 1) - 1}];`);
  }
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    L.push(`  wire signed [${pW}-1:0] ${p.port};`, `  wire ${p.valid};`, `  reg ${p.ready};`, `  integer ${got.get(p.port)};`);
    L.push(`  reg signed [${pW}-1:0] ${exp.get(p.port)} [0:${Math.max(n, 1) - 1}];`);
  }
  for (const sp of serial) {
    const input = sp.direction === 'input';
    L.push(
      `  ${input ? 'reg' : 'wire'} signed [${pW}-1:0] ${sp.port};`,
      `  ${input ? 'reg' : 'wire'} ${sp.valid};`,
      `  ${input ? 'wire' : 'reg'} ${sp.ready};`,
      `  integer ${moved.get(sp.port)}${input ? `, ${offered.get(sp.port)}` : ''};`,
    );
    for (const p of members(sp)) {
      const len = input ? K : expected(p).length;
      L.push(`  reg signed [${pW}-1:0] ${(input ? vec : exp).get(p.port)} [0:${Math.max(len, 1) - 1}];`);
    }
  }
  const ins = serial.filter((sp) => sp.direction === 'input');
  const outs = serial.filter((sp) => sp.direction === 'output');
  const conns = [
    '.clk(clk)',
    '.rst(rst)',
    `.${bundle.start}(${bundle.start})`,
    `.${bundle.busy}(${bundle.busy})`,
    ...inPorts.flatMap((p) => [`.${p.port}(${p.port})`, `.${p.valid}(${p.valid})`, `.${p.ready}(${p.ready})`]),
    ...ins.flatMap((sp) => [`.${sp.port}(${sp.port})`, `.${sp.valid}(${sp.valid})`, `.${sp.ready}(${sp.ready})`]),
    ...outPorts.flatMap((p) => [`.${p.port}(${p.port})`, `.${p.valid}(${p.valid})`, `.${p.ready}(${p.ready})`]),
    ...outs.flatMap((sp) => [`.${sp.port}(${sp.port})`, `.${sp.valid}(${sp.valid})`, `.${sp.ready}(${sp.ready})`]),
  ];
  L.push(`  ${bundle.top} #(.W(${pW})) ${dut} (`, conns.map((c) => `    ${c}`).join(',\n'), '  );', '');
  L.push("  initial clk = 1'b0;", '  always #5 clk = ~clk;', '');
  L.push('  initial begin');
  for (const p of inPorts) vectors.inputs[p.node].forEach((v, i) => L.push(`    ${vec.get(p.port)}[${i}] = ${hex(v, W)};`));
  for (const p of outPorts) vectors.outputs[p.node].forEach((v, i) => L.push(`    ${exp.get(p.port)}[${i}] = ${hex(v, W)};`));
  for (const sp of serial) {
    for (const p of members(sp)) {
      if (sp.direction === 'input') vectors.inputs[p.node].forEach((v, i) => L.push(`    ${vec.get(p.port)}[${i}] = ${hex(v, W)};`));
      else expected(p).forEach((v, i) => L.push(`    ${exp.get(p.port)}[${i}] = ${hex(v, W)};`));
    }
  }
  L.push('  end', '');
  // Handshakes are counted at the rising edge, where the DUT samples them.
  L.push('  always @(posedge clk) begin', '    if (!rst) begin');
  for (const p of inPorts) L.push(`      if (${p.valid} && ${p.ready}) ${sent.get(p.port)} <= ${sent.get(p.port)} + 1;`);
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    const g = got.get(p.port)!;
    L.push(
      `      if (${p.valid} && ${p.ready}) begin`,
      `        if (${g} < ${n}) begin`,
      `          ${checked} = ${checked} + 1;`,
      `          if (${p.port} !== ${exp.get(p.port)}[${g}]) begin`,
      `            ${errors} = ${errors} + 1;`,
      `            if (${errors} <= 20) $display("MISMATCH ${p.port}: sample %0d at cycle %0d: expected %0d, got %0d", ${p.firstSample} + ${g}, ${cyc}, ${exp.get(p.port)}[${g}], ${p.port});`,
      '          end',
      '        end',
      `        ${g} <= ${g} + 1;`,
      '      end',
    );
  }
  for (const sp of ins) L.push(`      if (${sp.valid} && ${sp.ready}) ${moved.get(sp.port)} <= ${moved.get(sp.port)} + 1;`);
  // A serial output's t-th sample is member t mod m's sample t div m (m members, declared order).
  for (const sp of outs) {
    const m = sp.nodes.length;
    const t = moved.get(sp.port)!;
    L.push(`      if (${sp.valid} && ${sp.ready}) begin`);
    members(sp).forEach((p, k) => {
      const n = expected(p).length;
      L.push(
        `        if (${t} % ${m} == ${k} && ${t} / ${m} < ${n}) begin`,
        `          ${checked} = ${checked} + 1;`,
        `          if (${sp.port} !== ${exp.get(p.port)}[${t} / ${m}]) begin`,
        `            ${errors} = ${errors} + 1;`,
        `            if (${errors} <= 20) $display("MISMATCH ${p.port} on ${sp.port}: sample %0d at cycle %0d: expected %0d, got %0d", ${p.firstSample} + ${t} / ${m}, ${cyc}, ${exp.get(p.port)}[${t} / ${m}], ${sp.port});`,
        '          end',
        '        end',
      );
    });
    L.push(`        ${t} <= ${t} + 1;`, '      end');
  }
  L.push('    end', '  end', '');
  L.push('  initial begin', `    ${errors} = 0;`, `    ${checked} = 0;`, `    ${seed} = ${vectors.seed};`, "    rst = 1'b1;", `    ${bundle.start} = 1'b0;`);
  for (const p of inPorts) L.push(`    ${p.port} = {${pW}{1'b0}};`, `    ${p.valid} = 1'b0;`, `    ${sent.get(p.port)} = 0;`, `    ${seen.get(p.port)} = 0;`);
  for (const p of outPorts) L.push(`    ${p.ready} = 1'b0;`, `    ${got.get(p.port)} = 0;`);
  for (const sp of ins) L.push(`    ${sp.port} = {${pW}{1'b0}};`, `    ${sp.valid} = 1'b0;`, `    ${moved.get(sp.port)} = 0;`, `    ${offered.get(sp.port)} = 0;`);
  for (const sp of outs) L.push(`    ${sp.ready} = 1'b0;`, `    ${moved.get(sp.port)} = 0;`);
  L.push('    @(posedge clk);', '    @(posedge clk);', '    @(negedge clk);', "    rst = 1'b0;", `    ${bundle.start} = 1'b1;`, '    @(negedge clk);', `    ${bundle.start} = 1'b0;`);
  const serialTotal = (sp: (typeof serial)[number]) => members(sp).reduce((a, p) => a + expected(p).length, 0);
  const done = [...outPorts.map((p) => `${got.get(p.port)} >= ${vectors.outputs[p.node].length}`), ...outs.map((sp) => `${moved.get(sp.port)} >= ${serialTotal(sp)}`)].join(' && ') || "1'b1";
  L.push(`    for (${cyc} = 0; ${cyc} < ${limit} && !(${done}); ${cyc} = ${cyc} + 1) begin`);
  L.push('      // Mid-cycle: offer the next sample (held until taken) and choose the readiness of each output.');
  for (const p of inPorts) {
    const s = sent.get(p.port)!;
    const last = seen.get(p.port)!;
    // A sample offered stays offered until taken; after a transfer (or while idle) a new draw.
    L.push(
      `      if (!${p.valid} || ${s} != ${last}) begin`,
      `        ${last} = ${s};`,
      // Past the vectors, zeros: an output produced late in an iteration needs the next one started.
      `        ${p.valid} = ($random(${seed}) % 4) != 0;`,
      `        ${p.port} = !${p.valid} ? {${pW}{1'bx}} : (${s} < ${pK}) ? ${vec.get(p.port)}[${s}] : {${pW}{1'b0}};`,
      '      end',
    );
  }
  for (const sp of ins) {
    const m = sp.nodes.length;
    const t = moved.get(sp.port)!;
    const last = offered.get(sp.port)!;
    const ps = members(sp);
    // The t-th sample offered on a serial input is member t mod m's sample t div m.
    const pick = ps.slice(0, -1).map((p, k) => `(${t} % ${m} == ${k}) ? ${vec.get(p.port)}[${t} / ${m}] : `).join('') + `${vec.get(ps[ps.length - 1].port)}[${t} / ${m}]`;
    L.push(
      `      if (!${sp.valid} || ${t} != ${last}) begin`,
      `        ${last} = ${t};`,
      `        ${sp.valid} = ($random(${seed}) % 4) != 0;`,
      `        ${sp.port} = !${sp.valid} ? {${pW}{1'bx}} : (${t} / ${m} < ${pK}) ? (${pick}) : {${pW}{1'b0}};`,
      '      end',
    );
  }
  for (const p of outPorts) L.push(`      ${p.ready} = ($random(${seed}) % 3) != 0;`);
  for (const sp of outs) L.push(`      ${sp.ready} = ($random(${seed}) % 3) != 0;`);
  L.push('      @(negedge clk);', '    end');
  const serialCounts = outs.flatMap((sp) => [
    `    if (${moved.get(sp.port)} < ${serialTotal(sp)}) begin`,
    `      ${errors} = ${errors} + 1;`,
    `      $display("MISMATCH ${sp.port}: %0d of ${serialTotal(sp)} samples arrived", ${moved.get(sp.port)});`,
    '    end',
  ]);
  const outputCount = outPorts.length + outs.reduce((a, sp) => a + sp.nodes.length, 0);
  L.push(...closing(outPorts, vectors, got, errors, checked, bundle.top, serialCounts, outputCount));
  return { name: `${tb}.v`, text: L.join('\n') };
}

/** The end of both testbenches: every output got all its samples, then the one PASS or FAIL line. */
function closing(
  outPorts: readonly PortTiming[],
  vectors: TestVectors,
  count: Map<string, string>,
  errors: string,
  checked: string,
  top: string,
  serialCounts: string[] = [],
  outputCount = outPorts.length,
): string[] {
  const L: string[] = [...serialCounts];
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    L.push(
      `    if (${count.get(p.port)} < ${n}) begin`,
      `      ${errors} = ${errors} + 1;`,
      `      $display("MISMATCH ${p.port}: %0d of ${n} samples arrived", ${count.get(p.port)});`,
      '    end',
    );
  }
  L.push(
    `    if (${errors} == 0) $display("PASS ${top}: %0d samples on ${outputCount} outputs, 0 mismatches", ${checked});`,
    `    else $display("FAIL ${top}: %0d mismatches in %0d samples", ${errors}, ${checked});`,
    '    $finish;',
    '  end',
    'endmodule',
    '',
  );
  return L;
}
