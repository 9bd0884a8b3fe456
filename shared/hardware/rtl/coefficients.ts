// Step 2 of the RTL: the coefficients of the scaled operations, quantised once and named as
// localparams of the top module; the coefficient field is wide enough for all of them.
import { coefficientWidth, quantizeCoefficient } from '../arith';
import type { UnitControl } from '../../types';
import { hex, safe, type Names, verilogIdent } from './names';
import type { RtlBundle } from './types';
import { variantOf } from './variants';

export interface CoefficientParams {
  coefficients: RtlBundle['coefficients'];
  /** Node id -> localparam name. */
  coefParam: Map<string, string>;
  /** Width of the coefficient field, 0 when the design has no coefficient. */
  CW: number;
}

export function coefficientParams(activeUnits: UnitControl[], names: Names, F: number): CoefficientParams {
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
  return { coefficients, coefParam, CW };
}

/** The localparam lines of the top module: CW, COEF_FRAC and one constant per coefficient. */
export function coefficientLocals(p: CoefficientParams, F: number): string[] {
  const locals: string[] = [];
  if (!p.CW) return locals;
  locals.push(`  localparam CW = ${p.CW};`, `  localparam COEF_FRAC = ${F};`);
  for (const c of p.coefficients) {
    const q = BigInt(c.quantised);
    locals.push(`  localparam signed [CW-1:0] ${p.coefParam.get(c.node)} = ${hex(q, p.CW)}; // ${safe(c.node)}: ${c.text ?? c.value} ~ ${q} / 2^${F}`);
  }
  locals.push('');
  return locals;
}
