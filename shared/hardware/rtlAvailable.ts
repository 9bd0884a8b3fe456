// Whether a design entry of a stored report can be turned into RTL, in the report's own terms:
// the server's RTL download and the run page's button ask the same question.
import type { DesignReport } from '../types';

/** Why a design of a run has no RTL download, or null when it has one. */
export function rtlUnavailable(d: DesignReport): string | null {
  if (d.status === 'error' || d.factor == null) return 'The design is not valid, so there is no datapath to write.';
  if (typeof (d as { source?: unknown }).source !== 'string') return 'The run was uploaded without the text of this design, so its RTL cannot be made here.';
  if (d.retiming && !d.retiming.feasible) return 'The plan has no feasible folded datapath: no retiming makes every folded delay nonnegative.';
  return null;
}
