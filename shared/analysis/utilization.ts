// Method: hardware utilization efficiency, the share of operation slots doing useful work.
// Convention: every unit offers N slots per iteration, busy or idle.
import type { Utilization } from '../types';
import type { IndexedGraph } from './graph';

export function utilization(g: IndexedGraph): Utilization {
  const N = g.factor;
  const units: Record<string, number> = {};
  let operations = 0;
  for (let k = 0; k < g.unitIds.length; k++) {
    units[g.unitIds[k]] = g.unitOperations[k] / N;
    operations += g.unitOperations[k];
  }
  // A design without units has no slots to use: report 0 rather than 0/0.
  const overall = g.unitIds.length > 0 ? operations / (g.unitIds.length * N) : 0;
  return { overall, units };
}
