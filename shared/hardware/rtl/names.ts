// Names of the generated Verilog: identifiers for arbitrary ids, keywords avoided, one namespace
// per module with the owner of every name, so that a renamed port can say why (docs/rtl.md, Names).

// Verilog-2005 and SystemVerilog keywords (Verilator reads .v files as SystemVerilog).
export const RESERVED = new Set(
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

export function bitsFor(maxValue: number): number {
  return Math.max(1, Math.ceil(Math.log2(maxValue + 1)));
}

/** Unique names within one namespace; remembers who holds each name, to say why one was renamed. */
export class Names {
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
 * Longest module name Pleat writes: module files are `<top>_<kind>_s<stages>.v`, and file systems
 * refuse names past 255 bytes. Longer identifiers keep their start and a hash of the whole.
 */
export const MAX_IDENT = 64;
export function boundedIdent(s: string, max = MAX_IDENT): string {
  if (s.length <= max) return s;
  // FNV-1a (32 bit) of the whole name keeps two long names that share a start apart.
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) h = Math.imul(h ^ s.charCodeAt(i), 0x01000193) >>> 0;
  return `${s.slice(0, max - 9)}_${h.toString(16).padStart(8, '0')}`;
}

/** Why verilogIdent changed an id, or null when it did not. */
export function identReason(id: string, ident: string): string | null {
  if (ident === id) return null;
  if (RESERVED.has(id)) return 'a Verilog or SystemVerilog keyword';
  return 'not a Verilog identifier';
}

/** An id as it may appear inside a `//` comment: no line breaks or other control characters. */
export const safe = (id: string) => id.replace(/[\u0000-\u001f\u007f]/g, ' ');

export const hex = (v: bigint, width: number) => `${width}'h${BigInt.asUintN(width, v).toString(16)}`;
