// Where the worker finds the planning engine (shared/planning/). Loaded when a worker starts, so
// the API process never loads it.
import type { Planner } from './run';

export async function loadPlanner(): Promise<Planner> {
  // The engine lands on another branch; until it is merged this import names its entry point.
  const specifier = '../../shared/planning/index';
  const mod = (await import(/* @vite-ignore */ specifier)) as Partial<Planner>;
  if (typeof mod.planDesign !== 'function' || typeof mod.sweepDesign !== 'function') {
    throw new Error('the planning engine (shared/planning) does not export planDesign and sweepDesign');
  }
  return { planDesign: mod.planDesign, sweepDesign: mod.sweepDesign };
}
