// What every plan must satisfy, checked by the engine's own validation and analysis (the checks
// `pleat check` makes), restated here so that the planner cannot grade itself.
import { analyze } from '../../shared/analysis/analyze';
import { controlTables } from '../../shared/hardware/control';
import { validateDesign } from '../../shared/design/validate';
import { designDocument } from '../../shared/planning/problem';
import type { PlanResult } from '../../shared/planning/types';
import type { Design } from '../../shared/types';

/** Problems of a returned plan against the design it was made for ([] when none). */
export function planProblems(design: Design, plan: PlanResult, pins: Record<string, (string | null)[]> = {}): string[] {
  const out: string[] = [];
  if (plan.status === 'infeasible') return out;
  const planned: Design = { ...design, units: plan.units, folding: { ...design.folding, factor: plan.factor, sets: plan.sets } };
  const v = validateDesign(JSON.parse(JSON.stringify(designDocument(planned))));
  // problems the design has whatever its sets (e.g. arithmetic the generator left open) are not the plan's
  const before = new Set(validateDesign(JSON.parse(JSON.stringify(designDocument(design)))).diagnostics.map((d) => `${d.code} ${d.message}`));
  for (const d of v.diagnostics) if (d.severity === 'error' && !before.has(`${d.code} ${d.message}`)) out.push(`invalid: ${d.code} ${d.message}`);
  if (out.length) return out;
  const a = analyze(v.design ?? planned);
  if (!a.retiming.feasible) out.push('no retiming: some folded delay stays negative');
  for (const e of a.edges) if (e.retimedFoldedDelay !== null && e.retimedFoldedDelay < 0) out.push(`negative folded delay on ${e.from} -> ${e.to}`);
  if (plan.factor < a.factorLowerBound) out.push(`N = ${plan.factor} below the factor lower bound ${a.factorLowerBound}`);
  const ops = new Map<string, number>();
  for (const n of design.nodes) if (n.kind !== 'input' && n.kind !== 'output') ops.set(n.kind, (ops.get(n.kind) ?? 0) + 1);
  for (const [kind, count] of ops) {
    const units = plan.units.filter((u) => u.kind === kind).length;
    if (units < Math.ceil(count / plan.factor)) out.push(`kind ${kind}: ${units} units for ${count} operations at N = ${plan.factor}`);
  }
  if (plan.objective && a.registers && plan.objective.registers !== a.registers.minimum) {
    out.push(`reported ${plan.objective.registers} registers, the check finds ${a.registers.minimum}`);
  }
  if (plan.objective && plan.objective.latencyAdded !== a.retiming.latencyAdded) {
    out.push(`reported latency +${plan.objective.latencyAdded}, the check finds +${a.retiming.latencyAdded}`);
  }
  // the control tables the check's datapath gets (pleat simulate --tables, pleat rtl), counted here
  const control = controlTables(v.design ?? planned, a).control;
  if (plan.objective && control) {
    const mux = control.muxes.reduce((s, m) => s + m.sources.length, 0);
    if (plan.objective.muxInputs !== mux) out.push(`reported ${plan.objective.muxInputs} multiplexer inputs, the control tables have ${mux}`);
  }
  for (const [unit, list] of Object.entries(pins)) {
    list.forEach((id, t) => {
      if (id !== null && plan.sets[unit]?.[t] !== id) out.push(`pin ${id} at ${unit}[${t}] moved`);
    });
  }
  return out;
}
