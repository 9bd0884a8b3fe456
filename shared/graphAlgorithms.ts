// Generic graph routines on compressed adjacency rows, with no knowledge of designs: the design
// stage (zero-delay loops), the analysis (iteration bound) and the reference evaluation share them.
// Method: counting sort; Tarjan's strongly connected components, iterative.

/** Counting sort of items 0..key.length-1 by key (0..n-1): compressed adjacency lists. */
export function bucket(n: number, key: Int32Array): { start: Int32Array; items: Int32Array } {
  const start = new Int32Array(n + 1);
  for (let i = 0; i < key.length; i++) start[key[i] + 1]++;
  for (let v = 0; v < n; v++) start[v + 1] += start[v];
  const fill = start.slice(0, n);
  const items = new Int32Array(key.length);
  for (let i = 0; i < key.length; i++) items[fill[key[i]]++] = i;
  return { start, items };
}

/**
 * Strongly connected components (Tarjan), iterative so that a million-node chain cannot
 * overflow the call stack. comp[v] numbers components in reverse topological order; root[c] is
 * the first node of component c that the depth-first search reached (roots tried in order 0..n-1,
 * arcs in row order), so callers that walk a component from its root get the same walk every time.
 */
export function stronglyConnected(
  n: number,
  outStart: Int32Array,
  outArc: Int32Array,
  arcTo: Int32Array,
): { comp: Int32Array; count: number; root: Int32Array } {
  const index = new Int32Array(n).fill(-1);
  const low = new Int32Array(n);
  const comp = new Int32Array(n).fill(-1);
  const stack = new Int32Array(n);
  const call = new Int32Array(n);
  const cursor = new Int32Array(n);
  let sp = 0;
  let counter = 0;
  let count = 0;
  const first = new Int32Array(n);
  for (let root = 0; root < n; root++) {
    if (index[root] !== -1) continue;
    let cp = 0;
    index[root] = low[root] = counter++;
    stack[sp++] = root;
    call[cp++] = root;
    cursor[root] = outStart[root];
    while (cp > 0) {
      const v = call[cp - 1];
      if (cursor[v] < outStart[v + 1]) {
        const w = arcTo[outArc[cursor[v]++]];
        if (index[w] === -1) {
          index[w] = low[w] = counter++;
          stack[sp++] = w;
          call[cp++] = w;
          cursor[w] = outStart[w];
        } else if (comp[w] === -1 && index[w] < low[v]) {
          low[v] = index[w]; // w is still on the stack
        }
        continue;
      }
      cp--;
      if (low[v] === index[v]) {
        first[count] = v;
        let w: number;
        do {
          w = stack[--sp];
          comp[w] = count;
        } while (w !== v);
        count++;
      }
      if (cp > 0) {
        const parent = call[cp - 1];
        if (low[v] < low[parent]) low[parent] = low[v];
      }
    }
  }
  return { comp, count, root: first.subarray(0, count) };
}
