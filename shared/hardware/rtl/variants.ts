// The operations a unit runs, told apart by operation, operand count and coefficient: each
// variant is one expression of the unit module, selected by an op code when there are several.
import type { NodeOp, UnitSlot } from '../../types';

export interface Variant {
  op: NodeOp;
  arity: number;
  scaled: boolean;
}

export function variantOf(s: UnitSlot): Variant {
  const op = s.op;
  if (!op) throw new Error(`node ${s.node} has no arithmetic`);
  return { op, arity: s.arity, scaled: op === 'gain' || (op === 'mul' && s.coefficient !== null) };
}
export function variantKey(v: Variant): string {
  return `${v.op}/${v.arity}/${v.scaled ? 'c' : ''}`;
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
