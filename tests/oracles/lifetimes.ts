// Lifetime analysis and register allocation restated from their definitions in docs/analysis.md,
// without the engine: which instances are live in each partition, a direct count over iterations,
// and the consistency of an allocation table (every live instance held once, transfers replayed).

/** A variable of lifetime analysis as the tests state it: produced at tIn, last used at tOut. */
export interface TestLifetime {
  variable: string;
  tIn: number;
  tOut: number;
}

/**
 * The instances live during each partition of the periodic steady state, by the rule of
 * docs/analysis.md (not live in the production cycle, live in the last-use cycle), named `X` or
 * `X@j` when the instance entered the registers more than j*N cycles ago.
 */
export function expectedRows(vars: readonly TestLifetime[], N: number): string[][] {
  const rows: string[][] = Array.from({ length: N }, () => []);
  for (const x of vars) {
    for (let e = 1; e <= x.tOut - x.tIn; e++) {
      const j = Math.floor((e - 1) / N);
      rows[(x.tIn + e) % N].push(j === 0 ? x.variable : `${x.variable}@${j}`);
    }
  }
  return rows.map((r) => r.sort());
}

/** Problems with an allocation table, or [] when it is consistent. */
export function allocationProblems(
  alloc: {
    registers: number;
    factor: number;
    cells: (string | null)[][];
    moves: { cycle: number; variable: string; from: number | 'unit'; to: number }[];
  },
  vars: readonly TestLifetime[],
): string[] {
  const problems: string[] = [];
  const N = alloc.factor;
  const K = alloc.registers;
  const expected = expectedRows(vars, N);
  if (alloc.cells.length !== N) problems.push(`expected ${N} rows, got ${alloc.cells.length}`);
  alloc.cells.forEach((row, t) => {
    if (row.length !== K) problems.push(`row ${t} has ${row.length} registers, expected ${K}`);
    const held = row.filter((c): c is string => c !== null).sort();
    if (new Set(held).size !== held.length) problems.push(`row ${t} holds one instance twice: ${held}`);
    if (JSON.stringify(held) !== JSON.stringify(expected[t])) {
      problems.push(`row ${t} holds [${held}] but the live instances are [${expected[t]}]`);
    }
  });
  // Replaying the transfers of partition t must give row t + 1 exactly.
  for (let t = 0; t < N && problems.length === 0; t++) {
    const next = new Array<string | null>(K).fill(null);
    const used = new Set<number>();
    for (const mv of alloc.moves.filter((x) => x.cycle === t)) {
      if (next[mv.to] !== null) problems.push(`partition ${t}: register ${mv.to} loaded twice`);
      next[mv.to] = mv.variable;
      if (mv.from !== 'unit') {
        const src = alloc.cells[t][mv.from];
        if (src === null || src.split('@')[0] !== mv.variable.split('@')[0]) {
          problems.push(`partition ${t}: move of ${mv.variable} from register ${mv.from}, which holds ${src}`);
        }
        if (used.has(mv.from)) problems.push(`partition ${t}: register ${mv.from} read twice`);
        used.add(mv.from);
      }
    }
    const want = alloc.cells[(t + 1) % N];
    if (JSON.stringify(next) !== JSON.stringify(want)) {
      problems.push(`transfers after partition ${t} give [${next}] instead of [${want}]`);
    }
  }
  return problems;
}

/** live(t) by the definition: count every iteration l with tIn + lN < t <= tOut + lN. */
export function liveByDefinition(N: number, vars: { tIn: number; tOut: number }[]): number[] {
  const live = new Array<number>(N).fill(0);
  for (const v of vars) {
    for (let t = 0; t < N; t++) {
      for (let l = -Math.ceil((v.tOut + 1) / N) - 1; l <= Math.ceil(t / N) + 1; l++) {
        if (v.tIn + l * N < t && t <= v.tOut + l * N) live[t]++;
      }
    }
  }
  return live;
}
