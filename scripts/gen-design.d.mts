// Types of scripts/gen-design.mjs for the TypeScript tests that generate large designs.
export function generateDesign(opts?: { edges?: number; seed?: number; factor?: number; name?: string; sectionsPerChannel?: number }): {
  text: string; nodes: number; edges: number; units: number; channels: number;
};
export function generateFir(opts: { taps: number; factor?: number; seed?: number; name?: string }): {
  text: string; nodes: number; edges: number; units: number;
};
