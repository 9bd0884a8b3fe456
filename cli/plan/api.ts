// The planning engine's types as the CLI uses them (shared/planning/types.ts).
import type { Design } from '../../shared/types';
import type { PlanOptions, PlanResult, SweepOptions, SweepRow } from '../../shared/planning/types';

export type * from '../../shared/planning/types';
export type PlanDesign = (design: Design, options: PlanOptions) => Promise<PlanResult>;
export type SweepDesign = (design: Design, options: SweepOptions) => Promise<SweepRow[]>;
