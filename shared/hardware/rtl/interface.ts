// Step 1 of the RTL: every name of the top module. Ports first (they are the interface a user
// sees, each keeps its node's id where it can), then the top module and the internal signals.
import type { ControlTables, Design, UnitControl } from '../../types';
import { boundedIdent, identReason, MAX_IDENT, Names, verilogIdent } from './names';
import type { RtlOptions, RtlRename } from './types';

/** The signals of one active unit in the top module (its module is shared by kind, stages and operations: units.ts). */
export interface UnitSignals {
  base: string;
  y: string;
  inst: string;
}

/** The names of one generated top module. */
export interface RtlNames {
  /** Interface names that differ from the convention, with the reason. */
  renamed: RtlRename[];
  /** The namespace of the top module; later steps claim their signals in it. */
  names: Names;
  portOf: Map<string, string>;
  validOf: Map<string, string>;
  top: string;
  tbName: string;
  /** The partition counter and the iteration counter. */
  part: string;
  iter: string;
  regName: string[];
  /** Units that run something in some partition: only these get a module. */
  activeUnits: UnitControl[];
  unitSig: Map<string, UnitSignals>;
  /** The scope of module names (the top's and the testbench's are taken); units.ts claims the unit modules'. */
  moduleNames: Names;
}

export function interfaceNames(design: Design, control: ControlTables, opts: RtlOptions): RtlNames {
  const renamed: RtlRename[] = [];
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
  const unitSig = new Map<string, UnitSignals>();
  for (const u of activeUnits) {
    const base = names.claim(boundedIdent(`pl_${verilogIdent(u.unit)}`));
    unitSig.set(u.unit, {
      base,
      y: names.claim(`${base}_y`),
      inst: names.claim(`${base}_u`),
    });
  }
  return { renamed, names, portOf, validOf, top, tbName, part, iter, regName, activeUnits, unitSig, moduleNames };
}
