// Step 4 of the RTL: unit modules and their instances: the operations a unit runs (its variants),
// the op-code, operand and coefficient multiplexers in front of it, and its behavioural pipeline.
import type { ControlTables, UnitControl } from '../../types';
import type { RtlNames } from './interface';
import { bitsFor, boundedIdent, MAX_IDENT, safe, verilogIdent } from './names';
import type { PartitionChoice, SignalReader } from './signals';
import type { CoefficientParams } from './coefficients';
import { variantKey, variantOf, variantText, type QuantOf, type Variant } from './variants';
import { requantiseLines, sext } from './requantise';
import { formatName } from '../../design/numberFormat';

/**
 * The netlist parts of the units: instances in the top module, and one module file per kind,
 * pipeline stages and operations (in op-code order), which every unit of that shape instantiates.
 */
export interface UnitInstances {
  unitBlocks: string[];
  unitFiles: { name: string; text: string }[];
}

export function unitInstances(
  control: ControlTables,
  n: RtlNames,
  looped: Set<string>,
  coef: CoefficientParams,
  read: SignalReader,
  choose: PartitionChoice,
  gen: { designName: string; generator: string; W: number; F: number; quantOf?: QuantOf; ce?: string },
): UnitInstances {
  const { names, unitSig } = n;
  const { coefParam, CW } = coef;
  const unitBlocks: string[] = [];
  const unitFiles: { name: string; text: string }[] = [];
  // The shared modules by what their text depends on: kind, stages, operand ports and operations.
  const modules = new Map<string, { name: string; units: UnitControl[]; variants: Variant[]; hasCoef: boolean; OW: number }>();
  const moduleOf = (u: UnitControl, variants: Variant[], hasCoef: boolean, OW: number): string => {
    const key = JSON.stringify([u.kind, u.stages, u.ports, variants.map(variantKey)]);
    let m = modules.get(key);
    if (!m) {
      const name = n.moduleNames.claim(boundedIdent(`${n.top}_${verilogIdent(u.kind)}_s${u.stages}`, 2 * MAX_IDENT));
      modules.set(key, (m = { name, units: [], variants, hasCoef, OW }));
    }
    m.units.push(u);
    return m.name;
  };
  for (const u of n.activeUnits) {
    const names_ = unitSig.get(u.unit)!;
    const variants: Variant[] = [];
    const vIndex = new Map<string, number>();
    for (const s of u.partitions) {
      if (!s) continue;
      const v = variantOf(s, gen.quantOf);
      const k = variantKey(v);
      if (!vIndex.has(k)) {
        vIndex.set(k, variants.length);
        variants.push(v);
      }
    }
    const hasCoef = variants.some((v) => v.scaled);
    const OW = variants.length > 1 ? bitsFor(variants.length - 1) : 0;
    const moduleName = moduleOf(u, variants, hasCoef, OW);
    const lines: string[] = [`  // Unit ${safe(u.unit)} (${safe(u.kind)}, ${u.stages} pipeline stage${u.stages === 1 ? '' : 's'}): ${u.partitions.map((s, t) => `${t}:${s ? safe(s.node) : '-'}`).join(' ')}`];
    const conns: string[] = [];
    if (u.stages > 0) conns.push('.clk(clk)', '.rst(rst)', ...(gen.ce ? [`.ce(${gen.ce})`] : []));
    if (OW > 0) {
      const opSig = names.claim(`${names_.base}_op`);
      lines.push(
        ...choose(
          `[${OW - 1}:0]`,
          opSig,
          u.partitions.map((s) => (s ? `${OW}'d${vIndex.get(variantKey(variantOf(s, gen.quantOf)))}` : null)),
          `${OW}'d0`,
        ),
      );
      conns.push(`.op(${opSig})`);
    }
    for (let p = 0; p < u.ports; p++) {
      const m = control.muxes.find((x) => x.unit === u.unit && x.port === p)!;
      const a = names.claim(`${names_.base}_a${p}`);
      lines.push(`  // operand ${p}: ${m.sources.length === 1 ? 'no multiplexer (one source)' : `${m.sources.length}-input multiplexer`}`);
      const loopHere = looped.has(u.unit) && m.sources.some((x) => x.kind === 'unit');
      lines.push(...choose('signed [W-1:0]', a, m.select.map((sel) => (sel === null ? null : read.sig(m.sources[sel]))), "{W{1'b0}}", loopHere));
      conns.push(`.a${p}(${a})`);
    }
    if (hasCoef) {
      const c = names.claim(`${names_.base}_coef`);
      lines.push(...choose('signed [CW-1:0]', c, u.partitions.map((s) => (s && coefParam.has(s.node) ? coefParam.get(s.node)! : null)), "{CW{1'b0}}"));
      conns.push(`.coef(${c})`);
    }
    lines.push(`  wire signed [W-1:0] ${names_.y};`);
    conns.push(`.y(${names_.y})`);
    const params = hasCoef ? '#(.W(W), .CW(CW), .COEF_FRAC(COEF_FRAC))' : '#(.W(W))';
    lines.push(`  ${moduleName} ${params} ${names_.inst} (`, conns.map((c) => `    ${c}`).join(',\n'), '  );', '');
    for (const l of lines) unitBlocks.push(l);
  }
  for (const m of modules.values()) {
    unitFiles.push({ name: `${m.name}.v`, text: unitModule(m.name, m.units, m.variants, m.hasCoef, m.OW, gen.designName, gen.generator, gen.W, CW, gen.F, gen.ce !== undefined) });
  }
  return { unitBlocks, unitFiles };
}

/** The warning of a combinational loop through multiplexers, when there is one. */
export function loopWarnings(looped: Set<string>): string[] {
  if (!looped.size) return [];
  return [
    `units ${[...looped].join(', ')} have no pipeline stage and feed each other through multiplexers: a combinational loop in the netlist that is never active in one cycle (a false path); declare it to your timing tools, or give one of the units a stage`,
  ];
}

/** Units on a loop of direct (same-cycle) reads between 0-stage units: strongly connected parts. */
export function combinationalLoops(units: UnitControl[], control: ControlTables): Set<string> {
  const comb = new Set(units.filter((u) => u.stages === 0).map((u) => u.unit));
  const next = new Map<string, Set<string>>();
  for (const id of comb) next.set(id, new Set());
  for (const m of control.muxes) {
    if (!comb.has(m.unit)) continue;
    for (const s of m.sources) if (s.kind === 'unit' && comb.has(s.unit)) next.get(s.unit)!.add(m.unit);
  }
  // A unit is on a loop when it can reach itself.
  const out = new Set<string>();
  for (const start of comb) {
    const seen = new Set<string>();
    const stack = [...next.get(start)!];
    while (stack.length) {
      const v = stack.pop()!;
      if (v === start) {
        out.add(start);
        break;
      }
      if (seen.has(v)) continue;
      seen.add(v);
      stack.push(...next.get(v)!);
    }
  }
  return out;
}

/** The behavioural model of the units of one shape: the operations they run, then the pipeline. */
function unitModule(
  name: string,
  shared: UnitControl[],
  variants: Variant[],
  hasCoef: boolean,
  OW: number,
  designName: string,
  gen: string,
  W: number,
  CW: number,
  F: number,
  withCe = false,
): string {
  const u = shared[0];
  const P = u.stages;
  const users = shared.length === 1 ? `unit ${safe(u.unit)}` : `${shared.length} units (${safe(shared[0].unit)} ... ${safe(shared[shared.length - 1].unit)}; the top module's comments list them)`;
  const lines: string[] = [
    `// Unit module of kind ${safe(u.kind)} of design ${designName}, generated by ${gen}; instantiated for ${users}.`,
    '// A behavioural model: replace it with your own core of the same ports and latency.',
    `// Latency: the result of the operands of cycle c appears on y in cycle c+${P}${P === 0 ? ' (combinational)' : ''}.`,
    `// Operations${OW ? ' (op code: operation)' : ''}:`,
    ...variants.map((v, i) => `//   ${OW ? `${i}: ` : ''}${v.op}: y = ${variantText(v)}`),
    variants.some((v) => v.q)
      ? '// Every value is a signal of its own format held sign-extended in W bits; each result is requantised to its node\'s format.'
      : '// All values are W-bit two\'s complement; sums and products keep the low W bits.',
    '`default_nettype none',
    '',
    `module ${name} #(`,
    `  parameter W = ${W}${hasCoef ? ',' : ''}`,
    ...(hasCoef
      ? variants.some((v) => v.scaled && !v.q)
        ? [`  parameter CW = ${CW},`, `  parameter COEF_FRAC = ${F}`]
        : // With number formats the shifts are written out; COEF_FRAC stays for a replacement core.
          [`  parameter CW = ${CW},`, '  // verilator lint_off UNUSEDPARAM', `  parameter COEF_FRAC = ${F}`, '  // verilator lint_on UNUSEDPARAM']
      : []),
    ') (',
  ];
  const ports: string[] = [];
  if (P > 0) ports.push('  input  wire clk', '  input  wire rst', ...(withCe ? ['  input  wire ce'] : []));
  if (OW) ports.push(`  input  wire [${OW - 1}:0] op`);
  for (let p = 0; p < u.ports; p++) ports.push(`  input  wire signed [W-1:0] a${p}`);
  if (hasCoef) ports.push('  input  wire signed [CW-1:0] coef');
  ports.push('  output wire signed [W-1:0] y');
  lines.push(ports.join(',\n'), ');');

  // One expression per variant; scaled ones go through a full-width product.
  const exprs: string[] = [];
  variants.forEach((v, i) => {
    if (v.q) {
      lines.push(...quantisedVariant(v, i, W, CW, F));
      exprs.push(`pl_res${i}`);
      return;
    }
    const a = Array.from({ length: v.arity }, (_, k) => `a${k}`);
    if (!v.scaled) {
      exprs.push(v.op === 'add' ? a.join(' + ') : v.op === 'sub' ? a.join(' - ') : v.op === 'mul' ? a.join(' * ') : v.op === 'neg' ? '-a0' : 'a0');
      return;
    }
    let operand = 'a0';
    if (v.op === 'mul' && v.arity > 1) {
      operand = `pl_m${i}`;
      lines.push(`  wire signed [W-1:0] ${operand} = ${a.join(' * ')};`);
    }
    lines.push(
      '  // Full product of W + CW bits; the result is its bits COEF_FRAC .. COEF_FRAC+W-1 (an arithmetic',
      '  // shift right by COEF_FRAC, then the low W bits). The other bits are dropped on purpose.',
      '  // verilator lint_off UNUSEDSIGNAL',
      `  wire [W+CW-1:0] pl_p${i} = {{CW{${operand}[W-1]}}, ${operand}} * {{W{coef[CW-1]}}, coef};`,
      '  // verilator lint_on UNUSEDSIGNAL',
    );
    exprs.push(`pl_p${i}[COEF_FRAC +: W]`);
  });
  if (variants.length === 1) {
    lines.push(`  wire signed [W-1:0] pl_res = ${exprs[0]};`);
  } else {
    lines.push('  reg signed [W-1:0] pl_res;', '  always @* begin', '    case (op)');
    exprs.forEach((e, i) => {
      const label = i === exprs.length - 1 ? 'default' : `${OW}'d${i}`;
      lines.push(`      ${label}: pl_res = ${e};`);
    });
    lines.push('    endcase', '  end');
  }
  if (P === 0) lines.push('  assign y = pl_res;');
  else {
    const st = Array.from({ length: P }, (_, k) => `pl_s${k}`);
    lines.push(`  reg signed [W-1:0] ${st.join(', ')};`, '  always @(posedge clk) begin', '    if (rst) begin');
    for (const s of st) lines.push(`      ${s} <= {W{1'b0}};`);
    lines.push(withCe ? '    end else if (ce) begin' : '    end else begin');
    st.forEach((s, k) => lines.push(`      ${s} <= ${k === 0 ? 'pl_res' : st[k - 1]};`));
    lines.push('    end', '  end', `  assign y = ${st[P - 1]};`);
  }
  lines.push('endmodule', '', '`default_nettype wire', '');
  return lines.join('\n');
}

/**
 * One operation with number formats: the full-precision result from operands in their
 * producers' formats, requantised to the node's format (shared/hardware/formatArithmetic.ts).
 */
function quantisedVariant(v: Variant, i: number, W: number, CW: number, F: number): string[] {
  const { operandFrac: fr, sf } = v.q!;
  const p = `pl_v${i}`;
  const L: string[] = [`  // ${v.op} of ${v.arity} to ${formatName(sf.format)}, ${sf.rounding}, ${sf.overflow}; operands with ${fr.slice(0, v.arity).join(', ')} fraction bits`, '  // verilator lint_off UNUSEDSIGNAL'];
  const a = (k: number) => `a${k}`;
  let x: string;
  let xw: number;
  let xf: number;
  const gainOf = (y: string, yf: number, tag: string): [string, number, number] => {
    const g = `${p}_${tag}`;
    L.push(`  wire signed [${W + CW - 1}:0] ${g} = ${sext(y, W, W + CW)} * ${sext('coef', CW, W + CW)};`);
    return [g, W + CW, yf + F];
  };
  switch (v.op) {
    case 'add':
    case 'sub': {
      const fa = Math.max(...fr.slice(0, v.arity));
      const shift = Math.max(...fr.slice(0, v.arity).map((f) => fa - f));
      xw = W + shift + v.arity;
      xf = fa;
      const terms = Array.from({ length: v.arity }, (_, k) => sext(a(k), W, xw, fa - fr[k]));
      x = `${p}_x`;
      L.push(`  wire signed [${xw - 1}:0] ${x} = ${terms.join(v.op === 'add' ? ' + ' : ' - ')};`);
      break;
    }
    case 'mul': {
      xw = W * v.arity;
      xf = fr.slice(0, v.arity).reduce((s, f) => s + f, 0);
      x = `${p}_x`;
      L.push(`  wire signed [${xw - 1}:0] ${x} = ${Array.from({ length: v.arity }, (_, k) => sext(a(k), W, xw)).join(' * ')};`);
      if (v.scaled) {
        // The signal product in the node's format first, then the coefficient (as without formats).
        L.push(...requantiseLines(`${p}_m`, x, xw, xf, sf, W, `${p}_mq`));
        [x, xw, xf] = gainOf(`${p}_mq`, sf.format.frac, 'g');
      }
      break;
    }
    case 'gain':
      [x, xw, xf] = gainOf('a0', fr[0], 'g');
      break;
    case 'neg':
      x = `${p}_x`;
      xw = W + 1;
      xf = fr[0];
      L.push(`  wire signed [${W}:0] ${x} = -${sext('a0', W, W + 1)};`);
      break;
    case 'pass':
      x = 'a0';
      xw = W;
      xf = fr[0];
      break;
  }
  L.push(...requantiseLines(p, x, xw, xf, sf, W, `pl_res${i}`), '  // verilator lint_on UNUSEDSIGNAL');
  return L;
}
