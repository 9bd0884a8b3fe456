// Verilog-2001 text of a folded datapath from its control tables (Parhi, ch. 6: folding
// transformation), plus a self-checking testbench. Convention: W-bit two's complement, synchronous
// active-high reset, cycle 0 = the first cycle after the last reset edge, partition 0.
import { coefficientWidth, DEFAULT_FIXED, fixedArithmetic, quantizeCoefficient, randomStreams, type FixedFormat } from './arith';
import { evaluateReference, type ResolvedGraph } from './reference';
import type { ControlTables, Design, NodeOp, SignalSource, UnitControl, UnitSlot } from '../types';

// Verilog-2005 and SystemVerilog keywords (Verilator reads .v files as SystemVerilog).
const RESERVED = new Set(
  (
    'always and assign automatic begin buf bufif0 bufif1 case casex casez cell cmos config deassign default defparam design ' +
    'disable edge else end endcase endconfig endfunction endgenerate endmodule endprimitive endspecify endtable endtask event ' +
    'for force forever fork function generate genvar highz0 highz1 if ifnone incdir include initial inout input instance ' +
    'integer join large liblist library localparam macromodule medium module nand negedge nmos nor noshowcancelled not ' +
    'notif0 notif1 or output parameter pmos posedge primitive pull0 pull1 pulldown pullup pulsestyle_onevent ' +
    'pulsestyle_ondetect rcmos real realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1 scalared ' +
    'showcancelled signed small specify specparam strong0 strong1 supply0 supply1 table task time tran tranif0 tranif1 ' +
    'tri tri0 tri1 triand trior trireg unsigned use uwire vectored wait wand weak0 weak1 while wire wor xnor xor ' +
    'alias always_comb always_ff always_latch assert assume before bind bins binsof bit break byte chandle checker class ' +
    'clocking const constraint context continue cover covergroup coverpoint cross dist do endchecker endclass endclocking ' +
    'endgroup endinterface endpackage endprogram endproperty endsequence enum eventually expect export extends extern final ' +
    'first_match foreach forkjoin global iff ignore_bins illegal_bins implements implies import inside int interconnect ' +
    'interface intersect join_any join_none let local logic longint matches modport nettype new nexttime null package packed ' +
    'priority program property protected pure rand randc randcase randsequence ref reject_on restrict return s_always ' +
    's_eventually s_nexttime s_until s_until_with sequence shortint shortreal soft solve static string strong struct super ' +
    'sync_accept_on sync_reject_on tagged this throughout timeprecision timeunit type typedef union unique unique0 until ' +
    'until_with untyped var virtual void wait_order weak wildcard with within accept_on'
  ).split(' '),
);

/** A Verilog identifier for an arbitrary id: other characters become `_`, never a keyword. */
export function verilogIdent(id: string): string {
  let s = id.replace(/[^A-Za-z0-9_]/g, '_');
  if (!/^[A-Za-z_]/.test(s)) s = `n_${s}`;
  if (RESERVED.has(s)) s = `${s}_`;
  return s;
}

export interface RtlOptions {
  /** Default of the W parameter and of the testbench. */
  width?: number;
  /** Fractional bits of the quantised coefficients (fixed at generation). */
  coefFrac?: number;
  /** Header line naming the generator (e.g. with its version). */
  generator?: string;
  /** Top module name; default: the design name made a Verilog identifier. */
  topName?: string;
}

export interface PortTiming {
  node: string;
  port: string;
  direction: 'input' | 'output';
  /** How the port is used, in one sentence of the cycle convention. */
  timing: string;
  /** Inputs: partition of a slotted input, null when held. Outputs: cycle (of the iteration) at whose end the port loads. */
  slot?: number | null;
  cycle?: number;
  lag?: number;
  firstSample?: number;
  /** Outputs: the cycle of the first valid strobe. */
  firstStrobeCycle?: number;
  /** Outputs: the name of the one-cycle valid strobe (`<port>_valid` unless that name was taken). */
  valid?: string;
}

/** A name of the interface that differs from the one the convention gives (docs/rtl.md). */
export interface RtlRename {
  /** `data`: the port of a node; `strobe`: an output's valid strobe; `module`: the top module. */
  role: 'data' | 'strobe' | 'module';
  /** The node (data, strobe) or the design name (module). */
  of: string;
  /** The name the convention gives: the id, `<port>_valid`, or the design name. */
  wanted: string;
  /** The name in the Verilog. */
  name: string;
  /** Why, in a few words. */
  reason: string;
}

export interface RtlBundle {
  top: string;
  /** Synthesizable sources, one module per file, the top first. */
  files: { name: string; text: string }[];
  ports: PortTiming[];
  /** Every interface name that is not the one the convention gives, with the reason. */
  renamed: RtlRename[];
  /** Name of the testbench module (and its file, `<testbench>.v`). */
  testbench: string;
  /** `text`: the decimal as written, when it has more digits than the double `value` keeps; quantised from it. */
  coefficients: { node: string; value: number; text?: string; quantised: string }[];
  fixed: FixedFormat;
  /** Width of the coefficient field (0 when the design has no coefficient). */
  coefWidth: number;
  factor: number;
  /** Things an engineer should know about this netlist (e.g. a combinational loop through multiplexers). */
  warnings: string[];
}

interface Variant {
  op: NodeOp;
  arity: number;
  scaled: boolean;
}

function variantOf(s: UnitSlot): Variant {
  const op = s.op;
  if (!op) throw new Error(`node ${s.node} has no arithmetic`);
  return { op, arity: s.arity, scaled: op === 'gain' || (op === 'mul' && s.coefficient !== null) };
}
function variantKey(v: Variant): string {
  return `${v.op}/${v.arity}/${v.scaled ? 'c' : ''}`;
}
function variantText(v: Variant): string {
  const a = Array.from({ length: v.arity }, (_, i) => `a${i}`);
  switch (v.op) {
    case 'add':
      return a.join(' + ');
    case 'sub':
      return a.join(' - ');
    case 'mul':
      return v.scaled ? `(${a.join(' * ')}) * coef >>> COEF_FRAC` : a.join(' * ');
    case 'gain':
      return 'a0 * coef >>> COEF_FRAC';
    case 'neg':
      return '-a0';
    case 'pass':
      return 'a0';
  }
}

function bitsFor(maxValue: number): number {
  return Math.max(1, Math.ceil(Math.log2(maxValue + 1)));
}

/** Unique names within one namespace; remembers who holds each name, to say why one was renamed. */
class Names {
  private readonly taken = new Map<string, string>();
  constructor(reserved: string[] = [], owner = 'a reserved name') {
    for (const r of reserved) this.taken.set(r, owner);
  }
  names(): string[] {
    return [...this.taken.keys()];
  }
  has(name: string): boolean {
    return this.taken.has(name);
  }
  ownerOf(name: string): string | undefined {
    return this.taken.get(name);
  }
  claim(base: string, owner = 'an internal signal'): string {
    let s = base;
    for (let i = 2; this.taken.has(s); i++) s = `${base}_${i}`;
    this.taken.set(s, owner);
    return s;
  }
}

/**
 * Longest module name Pleat writes: module files are `<top>_unit_<UNIT>.v`, and file systems
 * refuse names past 255 bytes. Longer identifiers keep their start and a hash of the whole.
 */
const MAX_IDENT = 64;
function boundedIdent(s: string, max = MAX_IDENT): string {
  if (s.length <= max) return s;
  // FNV-1a (32 bit) of the whole name keeps two long names that share a start apart.
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193) >>> 0;
  return `${s.slice(0, max - 9)}_${h.toString(16).padStart(8, '0')}`;
}

/** Why verilogIdent changed an id, or null when it did not. */
function identReason(id: string, ident: string): string | null {
  if (ident === id) return null;
  if (RESERVED.has(id)) return 'a Verilog or SystemVerilog keyword';
  return 'not a Verilog identifier';
}

/** An id as it may appear inside a `//` comment: no line breaks or other control characters. */
const safe = (id: string) => id.replace(/[\u0000-\u001f\u007f]/g, ' ');

const hex = (v: bigint, width: number) => `${width}'h${BigInt.asUintN(width, v).toString(16)}`;

/**
 * Generates the folded datapath as Verilog-2001: a top module with clk, rst, one W-bit signed
 * port per input and output node (named by the node ids) and a valid strobe per output; a
 * partition counter; the multiplexers and registers of the control tables; one behavioural
 * module per unit.
 */
export function generateRtl(design: Design, control: ControlTables, opts: RtlOptions = {}): RtlBundle {
  const W = opts.width ?? DEFAULT_FIXED.width;
  const F = opts.coefFrac ?? DEFAULT_FIXED.coefFrac;
  const N = control.factor;
  const gen = opts.generator ?? 'pleat';
  const renamed: RtlRename[] = [];

  // Port names first: they are the interface a user sees. Each keeps its node's id where it can.
  const names = new Names(['clk', 'rst', 'W', 'CW', 'COEF_FRAC'], 'a port or parameter of every top module');
  const portOf = new Map<string, string>();
  const claimPort = (node: string, role: 'data' | 'strobe', wanted: string, ident: string, owner: string): string => {
    const bounded = boundedIdent(ident);
    const name = names.claim(bounded, owner);
    if (name !== wanted) {
      const reason =
        role === 'data' && identReason(wanted, ident)
          ? identReason(wanted, ident)!
          : bounded !== ident
            ? `longer than ${MAX_IDENT} characters`
            : `\`${bounded}\` is already ${names.ownerOf(bounded)}`;
      renamed.push({ role, of: node, wanted, name, reason });
    }
    return name;
  };
  for (const x of control.inputs) portOf.set(x.node, claimPort(x.node, 'data', x.node, verilogIdent(x.node), `the port of input ${x.node}`));
  const validOf = new Map<string, string>();
  for (const o of control.outputs) portOf.set(o.node, claimPort(o.node, 'data', o.node, verilogIdent(o.node), `the port of output ${o.node}`));
  for (const o of control.outputs) {
    const want = `${portOf.get(o.node)}_valid`;
    validOf.set(o.node, claimPort(o.node, 'strobe', want, want, `the valid strobe of output ${o.node}`));
  }
  // The top module: named after the design, never like one of its signals or a unit module's
  // (Verilator refuses a signal named like its module), and short enough for a file name.
  const unitInternals = ['clk', 'rst', 'op', 'y', 'coef', 'W', 'CW', 'COEF_FRAC', ...Array.from({ length: Math.max(0, ...control.units.map((u) => u.ports)) }, (_, i) => `a${i}`)];
  const wantedTop = opts.topName ?? verilogIdent(design.name);
  let top = boundedIdent(wantedTop, MAX_IDENT - 16);
  let topReason = top !== wantedTop ? `longer than ${MAX_IDENT - 16} characters` : null;
  if (/^(pl|tb)_/.test(top)) {
    top = `top_${top}`;
    topReason ??= 'starts like the internal names (pl_, tb_)';
  }
  while (names.has(top) || unitInternals.includes(top)) {
    topReason ??= names.has(top) ? `\`${top}\` is ${names.ownerOf(top)}` : `\`${top}\` is a signal of the unit modules`;
    top = `${top}_top`;
  }
  if (opts.topName === undefined && top !== design.name) {
    renamed.push({ role: 'module', of: design.name, wanted: design.name, name: top, reason: topReason ?? identReason(design.name, wantedTop) ?? 'not a Verilog identifier' });
  }
  // Module names live in one scope with every signal name: none may be a port of the top.
  const moduleNames = new Names([...names.names(), ...unitInternals]);
  moduleNames.claim(top);
  const tbName = moduleNames.claim(`${top}_tb`);
  // Internal names carry a pl_ prefix; Names keeps them apart from ports that start the same way.
  const part = names.claim('pl_part');
  const iter = names.claim('pl_iter');
  const regName = Array.from({ length: control.registers }, (_, k) => names.claim(`pl_r${k}`));
  const activeUnits = control.units.filter((u) => u.partitions.some((p) => p !== null));
  const unitSig = new Map<string, { base: string; y: string; inst: string; module: string }>();
  for (const u of activeUnits) {
    const base = names.claim(boundedIdent(`pl_${verilogIdent(u.unit)}`));
    unitSig.set(u.unit, {
      base,
      y: names.claim(`${base}_y`),
      inst: names.claim(`${base}_u`),
      module: moduleNames.claim(boundedIdent(`${top}_unit_${verilogIdent(u.unit)}`, 2 * MAX_IDENT)),
    });
  }

  // Coefficients: quantised once, named localparams.
  const coefficients: RtlBundle['coefficients'] = [];
  const coefParam = new Map<string, string>();
  for (const u of activeUnits) {
    for (const s of u.partitions) {
      if (!s || s.coefficient === null || !variantOf(s).scaled) continue;
      const q = quantizeCoefficient(s.coefficientText ?? s.coefficient, F);
      coefficients.push({ node: s.node, value: s.coefficient, ...(s.coefficientText !== undefined ? { text: s.coefficientText } : {}), quantised: q.toString() });
      coefParam.set(s.node, names.claim(`PL_COEF_${verilogIdent(s.node)}`));
    }
  }
  const CW = coefficients.length ? coefficientWidth(coefficients.map((c) => BigInt(c.quantised)), F) : 0;

  const PW = bitsFor(N - 1);
  const pconst = (t: number) => `${PW}'d${t}`;
  const maxWait = control.outputs.reduce((m, o) => Math.max(m, o.validAfterIterations), 0);
  const IW = bitsFor(maxWait);

  const used = new Set<string>();
  const sig = (s: SignalSource): string => {
    let name: string;
    switch (s.kind) {
      case 'unit':
        name = unitSig.get(s.unit)!.y;
        break;
      case 'input':
        name = portOf.get(s.node)!;
        break;
      case 'register':
        name = regName[s.register];
        break;
      case 'zero':
        return '{W{1\'b0}}';
    }
    used.add(name);
    return name;
  };

  // 0-stage units that feed each other's operands directly form a loop through multiplexers:
  // never active in one cycle (the partitions differ), but a loop in the netlist all the same.
  const looped = combinationalLoops(activeUnits, control);
  const warnings: string[] = [];
  if (looped.size) {
    warnings.push(
      `units ${[...looped].join(', ')} have no pipeline stage and feed each other through multiplexers: a combinational loop in the netlist that is never active in one cycle (a false path); declare it to your timing tools, or give one of the units a stage`,
    );
  }

  /** A choice by partition: a wire when one value serves every partition, else a case on the counter. */
  const choose = (type: string, target: string, values: (string | null)[], idle: string, falseLoop = false): string[] => {
    const distinct = [...new Set(values.filter((v): v is string => v !== null))];
    let lines: string[];
    if (distinct.length <= 1) lines = [`  wire ${type} ${target} = ${distinct[0] ?? idle};`];
    else {
      const groups = new Map<string, number[]>();
      values.forEach((v, t) => {
        if (v === null) return;
        if (!groups.has(v)) groups.set(v, []);
        groups.get(v)!.push(t);
      });
      lines = [`  reg ${type} ${target};`, '  always @* begin', `    case (${part})`];
      for (const [v, ts] of groups) lines.push(`      ${ts.map(pconst).join(', ')}: ${target} = ${v};`);
      lines.push(`      default: ${target} = ${idle};`, '    endcase', '  end');
    }
    if (falseLoop) {
      lines[0] = `  /* verilator lint_off UNOPTFLAT */\n${lines[0]}\n  /* verilator lint_on UNOPTFLAT */`;
    }
    return lines;
  };

  const body: string[] = [];
  // Partition counter.
  if (N > 1) {
    body.push(
      `  // Partition counter: cycle c of an iteration runs partition c; it wraps after ${N - 1}.`,
      `  reg [${PW - 1}:0] ${part};`,
      '  always @(posedge clk) begin',
      `    if (rst) ${part} <= ${pconst(0)};`,
      `    else if (${part} == ${pconst(N - 1)}) ${part} <= ${pconst(0)};`,
      `    else ${part} <= ${part} + ${pconst(1)};`,
      '  end',
      '',
    );
  }
  if (maxWait > 0) {
    const last = N > 1 ? ` && ${part} == ${pconst(N - 1)}` : '';
    body.push(
      `  // Completed iterations, saturating at ${maxWait}: holds back valid strobes until the first real sample.`,
      `  reg [${IW - 1}:0] ${iter};`,
      '  always @(posedge clk) begin',
      `    if (rst) ${iter} <= ${IW}'d0;`,
      `    else if (${iter} != ${IW}'d${maxWait}${last}) ${iter} <= ${iter} + ${IW}'d1;`,
      '  end',
      '',
    );
  }

  // Units with their multiplexers.
  const unitBlocks: string[] = [];
  const unitFiles: { name: string; text: string }[] = [];
  for (const u of activeUnits) {
    const names_ = unitSig.get(u.unit)!;
    const variants: Variant[] = [];
    const vIndex = new Map<string, number>();
    for (const s of u.partitions) {
      if (!s) continue;
      const v = variantOf(s);
      const k = variantKey(v);
      if (!vIndex.has(k)) {
        vIndex.set(k, variants.length);
        variants.push(v);
      }
    }
    const hasCoef = variants.some((v) => v.scaled);
    const OW = variants.length > 1 ? bitsFor(variants.length - 1) : 0;
    const lines: string[] = [`  // Unit ${safe(u.unit)} (${safe(u.kind)}, ${u.stages} pipeline stage${u.stages === 1 ? '' : 's'}): ${u.partitions.map((s, t) => `${t}:${s ? safe(s.node) : '-'}`).join(' ')}`];
    const conns: string[] = [];
    if (u.stages > 0) conns.push('.clk(clk)', '.rst(rst)');
    if (OW > 0) {
      const opSig = names.claim(`${names_.base}_op`);
      lines.push(
        ...choose(
          `[${OW - 1}:0]`,
          opSig,
          u.partitions.map((s) => (s ? `${OW}'d${vIndex.get(variantKey(variantOf(s)))}` : null)),
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
      lines.push(...choose('signed [W-1:0]', a, m.select.map((sel) => (sel === null ? null : sig(m.sources[sel]))), "{W{1'b0}}", loopHere));
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
    lines.push(`  ${names_.module} ${params} ${names_.inst} (`, conns.map((c) => `    ${c}`).join(',\n'), '  );', '');
    unitBlocks.push(...lines);
    unitFiles.push({ name: `${names_.module}.v`, text: unitModule(names_.module, u, variants, hasCoef, OW, design.name, gen, W, CW, F) });
  }

  // Registers of the allocation.
  const regBlocks: string[] = [];
  if (control.registers > 0) {
    regBlocks.push(`  // Registers (${control.allocationSource === 'analysis' ? 'forward-backward allocation of the analysis' : 'allocation of the control tables'}): each loads at the end of the partitions listed.`);
    regBlocks.push(`  reg signed [W-1:0] ${regName.join(', ')};`);
    for (const rt of control.registerTables) {
      const r = regName[rt.register];
      const loads = rt.loads.map((l) => (l ? sig(l.source) : null));
      const every = loads.every((l) => l !== null);
      regBlocks.push('  always @(posedge clk) begin', `    if (rst) ${r} <= {W{1'b0}};`);
      if (N === 1) regBlocks.push(`    else ${r} <= ${loads[0] ?? r};`);
      else {
        const groups = new Map<string, number[]>();
        loads.forEach((v, t) => {
          if (v === null) return;
          if (!groups.has(v)) groups.set(v, []);
          groups.get(v)!.push(t);
        });
        regBlocks.push('    else begin', `      case (${part})`);
        for (const [v, ts] of groups) regBlocks.push(`        ${ts.map(pconst).join(', ')}: ${r} <= ${v};`);
        regBlocks.push(`        default: ${r} <= ${every ? loads[0] : r};`, '      endcase', '    end');
      }
      regBlocks.push('  end');
    }
    regBlocks.push('');
  }

  // Output ports.
  const outBlocks: string[] = [];
  const ports: PortTiming[] = [];
  for (const x of control.inputs) {
    ports.push({
      node: x.node,
      port: portOf.get(x.node)!,
      direction: 'input',
      slot: x.slot,
      timing:
        x.slot === null
          ? `held: drive sample l during all of cycles ${N}l .. ${N}l+${N - 1}`
          : `slot ${x.slot}: drive sample l during cycle ${N}l+${x.slot}; other cycles are ignored`,
    });
  }
  for (const o of control.outputs) {
    const y = portOf.get(o.node)!;
    const v = validOf.get(o.node)!;
    const conds: string[] = [];
    if (N > 1) conds.push(`${part} == ${pconst(o.cycle % N)}`);
    if (o.validAfterIterations > 0) conds.push(`${iter} >= ${IW}'d${o.validAfterIterations}`);
    const cond = conds.length ? conds.join(' && ') : "1'b1";
    const firstStrobe = N * Math.max(0, o.lag) + o.cycle + 1;
    const what =
      o.mode === 'slot' ? `read in partition ${o.cycle}` : o.mode === 'tap' ? `taken when produced (cycle ${o.cycle} of the iteration)` : 'fed by no edge: always 0';
    outBlocks.push(
      `  // Output ${safe(o.node)}: ${what}; hardware iteration l carries sample l${o.lag === 0 ? '' : o.lag > 0 ? ` - ${o.lag}` : ` + ${-o.lag}`}.`,
      '  always @(posedge clk) begin',
      `    if (rst) begin`,
      `      ${y} <= {W{1'b0}};`,
      `      ${v} <= 1'b0;`,
      `    end else if (${cond}) begin`,
      `      ${y} <= ${sig(o.source)};`,
      `      ${v} <= 1'b1;`,
      `    end else begin`,
      `      ${v} <= 1'b0;`,
      '    end',
      '  end',
      '',
    );
    ports.push({
      node: o.node,
      port: y,
      direction: 'output',
      cycle: o.cycle,
      lag: o.lag,
      firstSample: o.firstSample,
      firstStrobeCycle: firstStrobe,
      valid: v,
      timing: `${v} is high during cycle ${firstStrobe} + ${N}k and ${y} then shows sample ${o.firstSample} + k, held until the next strobe`,
    });
  }

  // Declared signals nobody reads (an input feeding nothing, a result feeding nothing).
  const unread: string[] = [];
  for (const x of control.inputs) if (!used.has(portOf.get(x.node)!)) unread.push(portOf.get(x.node)!);
  for (const u of activeUnits) if (!used.has(unitSig.get(u.unit)!.y)) unread.push(unitSig.get(u.unit)!.y);
  for (const r of regName) if (!used.has(r)) unread.push(r);

  const header = [
    `// ${top}: folded datapath of design ${design.name}, generated by ${gen}. A starting point: timing`,
    '// closure and sign-off verification remain the engineer\'s.',
    `// Folding factor N = ${N}: one iteration (one sample per input) every ${N} clock cycles.`,
    '// Cycle 0 is the first cycle after the last rising edge of clk with rst high; it runs partition 0.',
    `// Arithmetic: W-bit two's complement, sums and products wrap to W bits${CW ? `; coefficients have ${F} fractional bits (${CW}-bit field), a gain keeps bits [COEF_FRAC +: W] of the full product` : ''}.`,
    `// Retiming adds ${control.latencyAdded} iteration${control.latencyAdded === 1 ? '' : 's'} of latency.`,
    '// Ports:',
    ...ports.map((p) => `//   ${p.port}${p.port !== p.node ? ` (node ${safe(p.node)})` : ''}: ${p.timing}`),
  ];
  const portDecl = [
    '  input  wire clk,',
    '  input  wire rst,',
    ...control.inputs.map((x) => `  input  wire signed [W-1:0] ${portOf.get(x.node)},`),
    ...control.outputs.flatMap((o) => [`  output reg  signed [W-1:0] ${portOf.get(o.node)},`, `  output reg  ${validOf.get(o.node)},`]),
  ];
  portDecl[portDecl.length - 1] = portDecl[portDecl.length - 1].replace(/,$/, '');
  const locals: string[] = [];
  if (CW) {
    locals.push(`  localparam CW = ${CW};`, `  localparam COEF_FRAC = ${F};`);
    for (const c of coefficients) {
      const q = BigInt(c.quantised);
      locals.push(`  localparam signed [CW-1:0] ${coefParam.get(c.node)} = ${hex(q, CW)}; // ${safe(c.node)}: ${c.text ?? c.value} ~ ${q} / 2^${F}`);
    }
    locals.push('');
  }
  const waiver = unread.length
    ? [
        '  // Signals that feed nothing in this plan (kept so the interface follows the design).',
        '  // verilator lint_off UNUSEDSIGNAL',
        `  wire pl_unused = &{1'b0, ${unread.join(', ')}, 1'b0};`,
        '  // verilator lint_on UNUSEDSIGNAL',
        '',
      ]
    : [];
  const topText = [
    ...header,
    '`default_nettype none',
    '',
    `module ${top} #(`,
    `  parameter W = ${W}`,
    ') (',
    ...portDecl,
    ');',
    ...locals,
    ...body,
    ...regBlocks,
    ...unitBlocks,
    ...outBlocks,
    ...waiver,
    'endmodule',
    '',
    '`default_nettype wire',
    '',
  ].join('\n');
  return {
    top,
    files: [{ name: `${top}.v`, text: topText }, ...unitFiles],
    ports,
    renamed,
    testbench: tbName,
    coefficients,
    fixed: { width: W, coefFrac: F },
    coefWidth: CW,
    factor: N,
    warnings,
  };
}

/** Units on a loop of direct (same-cycle) reads between 0-stage units: strongly connected parts. */
function combinationalLoops(units: UnitControl[], control: ControlTables): Set<string> {
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

/** The behavioural model of one unit: the operations it runs, then its pipeline. */
function unitModule(
  name: string,
  u: UnitControl,
  variants: Variant[],
  hasCoef: boolean,
  OW: number,
  designName: string,
  gen: string,
  W: number,
  CW: number,
  F: number,
): string {
  const P = u.stages;
  const lines: string[] = [
    `// Unit ${safe(u.unit)} (kind ${safe(u.kind)}) of design ${designName}, generated by ${gen}.`,
    '// A behavioural model: replace it with your own core of the same ports and latency.',
    `// Latency: the result of the operands of cycle c appears on y in cycle c+${P}${P === 0 ? ' (combinational)' : ''}.`,
    `// Operations${OW ? ' (op code: operation)' : ''}:`,
    ...variants.map((v, i) => `//   ${OW ? `${i}: ` : ''}${v.op}: y = ${variantText(v)}`),
    '// All values are W-bit two\'s complement; sums and products keep the low W bits.',
    '`default_nettype none',
    '',
    `module ${name} #(`,
    `  parameter W = ${W}${hasCoef ? ',' : ''}`,
    ...(hasCoef ? [`  parameter CW = ${CW},`, `  parameter COEF_FRAC = ${F}`] : []),
    ') (',
  ];
  const ports: string[] = [];
  if (P > 0) ports.push('  input  wire clk', '  input  wire rst');
  if (OW) ports.push(`  input  wire [${OW - 1}:0] op`);
  for (let p = 0; p < u.ports; p++) ports.push(`  input  wire signed [W-1:0] a${p}`);
  if (hasCoef) ports.push('  input  wire signed [CW-1:0] coef');
  ports.push('  output wire signed [W-1:0] y');
  lines.push(ports.join(',\n'), ');');

  // One expression per variant; scaled ones go through a full-width product.
  const exprs: string[] = [];
  variants.forEach((v, i) => {
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
    lines.push('    end else begin');
    st.forEach((s, k) => lines.push(`      ${s} <= ${k === 0 ? 'pl_res' : st[k - 1]};`));
    lines.push('    end', '  end', `  assign y = ${st[P - 1]};`);
  }
  lines.push('endmodule', '', '`default_nettype wire', '');
  return lines.join('\n');
}

// ---------------------------------------------------------------- test vectors and testbench

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
}

/**
 * Vectors from the integer reference: the unfolded DFG evaluated in exactly the RTL's fixed-point
 * arithmetic (same quantised coefficients, same truncation), so the match is bit-exact.
 */
export function testVectors(
  design: Design,
  graph: ResolvedGraph,
  control: ControlTables,
  opts: { iterations: number; seed: number; fixed: FixedFormat },
): TestVectors {
  const K = opts.iterations;
  const ar = fixedArithmetic(opts.fixed);
  const wait = control.outputs.reduce((m, o) => Math.max(m, Math.max(0, o.lag)), 0);
  const H = K + wait;
  const ids = control.inputs.map((x) => x.node);
  const inputs = randomStreams(ids, H, opts.seed, Math.min(opts.fixed.width, 32));
  let refIterations = H;
  for (const o of control.outputs) refIterations = Math.max(refIterations, o.firstSample + K);
  const ref = evaluateReference(design, graph, ar, inputs, refIterations);
  const outputs: Record<string, bigint[]> = {};
  for (const o of control.outputs) outputs[o.node] = ref.outputs[o.node].slice(o.firstSample, o.firstSample + K);
  return { iterations: H, samples: K, seed: opts.seed, inputs, outputs };
}

/**
 * A self-checking testbench: drives the vectors with the documented input timing, checks every
 * valid strobe (value and cycle) and prints `PASS <top>: ...` or `FAIL <top>: ...`.
 */
export function generateTestbench(bundle: RtlBundle, control: ControlTables, vectors: TestVectors): { name: string; text: string } {
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
  for (const p of outPorts) {
    const n = vectors.outputs[p.node].length;
    L.push(
      `    if (${seen.get(p.port)} < ${n}) begin`,
      `      ${errors} = ${errors} + 1;`,
      `      $display("MISMATCH ${p.port}: %0d of ${n} samples arrived", ${seen.get(p.port)});`,
      '    end',
    );
  }
  L.push(
    `    if (${errors} == 0) $display("PASS ${bundle.top}: %0d samples on ${outPorts.length} outputs, 0 mismatches", ${checked});`,
    `    else $display("FAIL ${bundle.top}: %0d mismatches in %0d samples", ${errors}, ${checked});`,
    '    $finish;',
    '  end',
    'endmodule',
    '',
  );
  return { name: `${tb}.v`, text: L.join('\n') };
}

// ---------------------------------------------------------------- the fully parallel reference for area

/**
 * The same graph without sharing: one 0-stage unit per operation, N = 1, boundary slots dropped.
 * Its RTL is what "does sharing pay?" compares the folded RTL with.
 */
export function parallelDesign(design: Design): Design {
  const taken = new Set([...design.nodes.map((n) => n.id), ...design.units.map((u) => u.id)]);
  const units: Design['units'] = [];
  const sets: Design['folding']['sets'] = {};
  for (const n of design.nodes) {
    if (n.kind === 'input' || n.kind === 'output') continue;
    let id = `P_${n.id}`;
    for (let i = 2; taken.has(id); i++) id = `P_${n.id}_${i}`;
    taken.add(id);
    units.push({ id, kind: n.kind, stages: 0 });
    sets[id] = [n.id];
  }
  const nodes = design.nodes.map((n) => {
    if (n.kind !== 'input' && n.kind !== 'output') return n;
    const { slot: _slot, ...rest } = n;
    return rest;
  });
  return {
    ...design,
    name: `${design.name}-parallel`,
    units,
    nodes,
    folding: { factor: 1, sets, latency: 'free' },
  };
}
