// The operations a unit runs, told apart by operation, operand count and coefficient: each
// variant is one expression of the unit module, selected by an op code when there are several.
import type { NodeOp, UnitSlot } from '../../types';
import { formatName } from '../../design/numberFormat';
import type { SignalFormat } from '../formats';

/** With number formats: the operands' fraction bits and the result's format and modes. */
export interface VariantQuant {
  operandFrac: number[];
  sf: SignalFormat;
}

export interface Variant {
  op: NodeOp;
  arity: number;
  scaled: boolean;
  q?: VariantQuant;
}

export type QuantOf = (node: string) => VariantQuant | undefined;

export function variantOf(s: UnitSlot, quantOf?: QuantOf): Variant {
  const op = s.op;
  if (!op) throw new Error(`node ${s.node} has no arithmetic`);
  const v: Variant = { op, arity: s.arity, scaled: op === 'gain' || (op === 'mul' && s.coefficient !== null) };
  const q = quantOf?.(s.node);
  if (q) v.q = q;
  return v;
}
export function variantKey(v: Variant): string {
  const q = v.q ? `/${v.q.operandFrac.join(',')}>${formatName(v.q.sf.format)}:${v.q.sf.rounding}:${v.q.sf.overflow}` : '';
  return `${v.op}/${v.arity}/${v.scaled ? 'c' : ''}${q}`;
}
export function variantText(v: Variant): string {
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
