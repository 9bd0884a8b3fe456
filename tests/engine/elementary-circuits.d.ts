// Types for the npm package elementary-circuits-directed-graph (Johnson 1975), which ships none.
declare module 'elementary-circuits-directed-graph' {
  /** All elementary circuits of a graph given as adjacency lists, each as [v0, ..., vk, v0]. */
  export default function findCircuits(adjacency: number[][], callback?: (circuit: number[]) => void): number[][];
}
