// Verilog-2001 text of a folded datapath from its control tables (Parhi, ch. 6: folding
// transformation), plus a self-checking testbench. Convention: W-bit two's complement, synchronous
// active-high reset, cycle 0 = the first cycle after the last reset edge, partition 0.
// One module per step: interface (names), coefficients, counters, units, registers, outputs, top;
// testbench and parallel are the two companions of `pleat rtl`.
import { DEFAULT_FIXED } from '../arith';
import { formatPlan } from '../formats';
import { resolveArithmetic } from '../reference';
import type { QuantOf } from './variants';
import type { OutputQuantOf } from './outputs';
import type { ControlTables, Design } from '../../types';
import { coefficientLocals, coefficientParams } from './coefficients';
import { counterBlocks } from './counters';
import { interfaceNames } from './interface';
import { inputTimings, outputRegisters } from './outputs';
import { registerFile } from './registers';
import { byPartition, counterTiming, SignalReader } from './signals';
import { topModuleText } from './top';
import type { RtlBundle, RtlOptions } from './types';
import { combinationalLoops, loopWarnings, unitInstances } from './units';
import { streamParts } from './stream';
import { alignSerialOutputs } from './serial';

export { verilogIdent } from './names';
export type { PortTiming, RtlBundle, RtlOptions, RtlRename } from './types';
export { generateTestbench, testVectors, type TestVectors } from './testbench';
export { parallelDesign, parallelReference, type ParallelOptions, type ParallelReference } from './parallel';
export { alignSerialOutputs } from './serial';

/**
 * Generates the folded datapath as Verilog-2001: a top module with clk, rst, one W-bit signed
 * port per input and output node (named by the node ids) and a valid strobe per output; a
 * partition counter; the multiplexers and registers of the control tables; one behavioural
 * module per unit.
 */
export function generateRtl(design: Design, tables: ControlTables, opts: RtlOptions = {}): RtlBundle {
  // Serial ports exist on the stream interface only; the strobe datapath is built as it always was.
  const serialPorts = opts.interface === 'stream' ? (design.serial ?? []) : [];
  const control = serialPorts.length ? alignSerialOutputs(design, tables) : tables;
  const plan = formatPlan(design, opts.width ?? DEFAULT_FIXED.width);
  // With number formats the data word holds every format; without, it is --width as always.
  const W = plan.container;
  const F = opts.coefFrac ?? DEFAULT_FIXED.coefFrac;
  let quantOf: QuantOf | undefined;
  let outQuantOf: OutputQuantOf | undefined;
  if (plan.declared) {
    const graph = resolveArithmetic(design).graph;
    if (!graph) throw new Error('the design has no arithmetic to generate');
    const fracOf = (e: number) => plan.signals[graph.index.get(design.edges[e].from)!].format.frac;
    quantOf = (node) => {
      const i = graph.index.get(node)!;
      return { operandFrac: graph.nodes[i].operands.map(fracOf), sf: plan.signals[i] };
    };
    outQuantOf = (node) => {
      const i = graph.index.get(node)!;
      const e = graph.nodes[i].operands[0];
      return e === undefined ? undefined : { fromFrac: fracOf(e), sf: plan.signals[i] };
    };
  }
  const N = control.factor;
  const generator = opts.generator ?? 'pleat';

  const n = interfaceNames(design, control, opts);
  const coef = coefficientParams(n.activeUnits, n.names, F);
  const timing = counterTiming(control);
  const stream = opts.interface === 'stream' ? streamParts(control, n, timing, serialPorts) : null;
  const read = new SignalReader(n, stream?.inputSignal);
  // 0-stage units that feed each other's operands directly form a loop through multiplexers:
  // never active in one cycle (the partitions differ), but a loop in the netlist all the same.
  const looped = combinationalLoops(n.activeUnits, control);
  const warnings = loopWarnings(looped);

  const body = counterBlocks(N, n.part, n.iter, timing, stream?.ce);
  const { unitBlocks, unitFiles } = unitInstances(control, n, looped, coef, read, byPartition(n.part, timing.pconst), {
    designName: design.name,
    generator,
    W,
    F,
    quantOf,
    ce: stream?.ce,
  });
  const regBlocks = registerFile(control, n, timing, read, stream?.ce);
  const outputs = outputRegisters(control, n, timing, read, outQuantOf, W, stream?.outputs);
  const serialOf = new Map<string, { port: string; index: number; of: number }>();
  for (const sp of stream?.serial ?? []) sp.nodes.forEach((node, index) => serialOf.set(node, { port: sp.port, index, of: sp.nodes.length }));
  const inputs = inputTimings(control, n).map((p) => {
    if (!stream) return p;
    const s = serialOf.get(p.node);
    return {
      ...p,
      valid: stream.inValid.get(p.node)!,
      ready: stream.inReady.get(p.node)!,
      timing: s
        ? `serial on ${s.port}: sample ${s.index} of every ${s.of} moved on ${s.port}; sample l feeds iteration l`
        : `stream: a sample moves in a cycle with ${stream.inValid.get(p.node)} and ${stream.inReady.get(p.node)} high; sample l feeds iteration l`,
      ...(s ? { serial: s.port, serialIndex: s.index } : {}),
    };
  });
  const outs = outputs.ports.map((p) => {
    const s = serialOf.get(p.node);
    if (!s) return p;
    return { ...p, serial: s.port, serialIndex: s.index, timing: `serial on ${s.port}: sample ${s.index} of every ${s.of} moved on ${s.port} is sample ${p.firstSample} + k of ${p.port}` };
  });
  const ports = [...inputs, ...outs];
  const topText = topModuleText(design, control, n, read, {
    W,
    F,
    CW: coef.CW,
    generator,
    ports,
    locals: coefficientLocals(coef, F),
    body,
    regBlocks,
    unitBlocks,
    outBlocks: outputs.outBlocks,
    formats: plan.declared,
    ...(stream ? { stream: { portDecl: stream.portDecl, early: stream.early, late: stream.late(stream.outputs), inputSignal: stream.inputSignal } } : {}),
  });
  return {
    top: n.top,
    files: [{ name: `${n.top}.v`, text: topText }, ...unitFiles],
    ports,
    renamed: n.renamed,
    testbench: n.tbName,
    coefficients: coef.coefficients,
    fixed: { width: W, coefFrac: F },
    coefWidth: coef.CW,
    factor: N,
    warnings,
    ...(stream ? { interface: 'stream' as const, start: stream.start, busy: stream.busy } : {}),
    ...(stream?.serial.length ? { serial: stream.serial.map((sp) => ({ id: sp.id, direction: sp.direction, port: sp.port, valid: sp.valid, ready: sp.ready, nodes: sp.nodes })) } : {}),
  };
}
