// Requantisation in Verilog: a signed value of known width and fraction bits taken to a
// signal's format (rounding mode, then overflow mode) and sign-extended into the W-bit word,
// exactly as shared/hardware/quantize.ts computes it. Every width is explicit, so Verilator's
// -Wall sees no implicit extension; the dropped bits are waived where they are declared.
import { rawRange } from '../../design/numberFormat';
import type { SignalFormat } from '../formats';
import { hex } from './names';

/** `{...}` of the parts that have a width: Verilog-2001 refuses a zero replication. */
function cat(parts: [number, string][]): string {
  const kept = parts.filter(([w]) => w > 0).map(([, p]) => p);
  return kept.length === 1 ? kept[0] : `{${kept.join(', ')}}`;
}

/** x (xw bits, signed) sign-extended to `to` bits, with `shift` zero bits appended. */
export function sext(x: string, xw: number, to: number, shift = 0): string {
  return cat([
    [to - xw - shift, `{${to - xw - shift}{${x}[${xw - 1}]}}`],
    [xw, x],
    [shift, `{${shift}{1'b0}}`],
  ]);
}

/**
 * Lines that take `x` (xw bits, xf fraction bits) to the signal format `sf` as the W-bit wire
 * `out`; names start with `p`.
 */
export function requantiseLines(p: string, x: string, xw: number, xf: number, sf: SignalFormat, W: number, out: string): string[] {
  const L: string[] = [];
  const d = xf - sf.format.frac;
  // 1. Rounding: the kept value k of width kw.
  let k = `${p}_k`;
  let kw: number;
  if (d > 0) {
    if (sf.rounding === 'truncate') {
      kw = xw - d;
      L.push(`  wire signed [${kw - 1}:0] ${k} = ${x}[${xw - 1}:${d}];`);
    } else {
      kw = xw + 1 - d;
      const b = `${p}_b`;
      const half = 1n << BigInt(d - 1);
      // round-half-up adds half an LSB; convergent adds half minus one, plus the kept LSB (ties to even).
      const terms =
        sf.rounding === 'round-half-up'
          ? `${sext(x, xw, xw + 1)} + ${xw + 1}'d${half}`
          : `${sext(x, xw, xw + 1)} + ${xw + 1}'d${half - 1n} + ${cat([[xw, `{${xw}{1'b0}}`], [1, `${x}[${d}]`]])}`;
      L.push(`  wire [${xw}:0] ${b} = ${terms};`, `  wire signed [${kw - 1}:0] ${k} = ${b}[${xw}:${d}];`);
    }
  } else if (d === 0) {
    k = x;
    kw = xw;
  } else {
    kw = xw - d;
    L.push(`  wire signed [${kw - 1}:0] ${k} = ${cat([[xw, x], [-d, `{${-d}{1'b0}}`]])};`);
  }
  // 2. Overflow: fits, wrapped value in W bits, saturated ends.
  const B = sf.format.bits;
  const { min, max } = rawRange(sf.format);
  const wrapped = sf.format.signed
    ? kw >= B
      ? cat([[W - B, `{${W - B}{${k}[${B - 1}]}}`], [B, kw === B ? k : `${k}[${B - 1}:0]`]])
      : sext(k, kw, W)
    : kw >= B
      ? cat([[W - B, `{${W - B}{1'b0}}`], [B, `${k}[${B - 1}:0]`]])
      : cat([[W - B, `{${W - B}{1'b0}}`], [B - kw, `{${B - kw}{${k}[${kw - 1}]}}`], [kw, k]]);
  let fits: string | null;
  if (sf.format.signed) fits = kw > B ? `(&${k}[${kw - 1}:${B - 1}] | ~|${k}[${kw - 1}:${B - 1}])` : null;
  else fits = kw > B ? `(~|${k}[${kw - 1}:${B}])` : `~${k}[${kw - 1}]`;
  if (sf.overflow === 'wrap' || fits === null) {
    L.push(`  wire signed [${W - 1}:0] ${out} = ${wrapped};`);
  } else {
    L.push(`  wire signed [${W - 1}:0] ${out} = ${fits} ? ${wrapped} : ${k}[${kw - 1}] ? ${hex(min, W)} : ${hex(max, W)};`);
  }
  return L;
}
