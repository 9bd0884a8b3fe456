// The unit budget of `pleat plan` and `pleat sweep`: parsing `--units KIND=COUNT,...`,
// `--stages KIND=S,...` and `--factors`, and making or dropping units per kind with ids of
// Pleat's own scheme (docs/cli.md, "Units made and dropped").
import { InvalidArgumentError } from 'commander';
import type { Design, Unit } from '../../shared/types';
import { CliError } from '../context';

const KIND = /^[A-Za-z_][A-Za-z0-9_-]*$/;

/** `add=2,mul=1` -> { add: 2, mul: 1 }; a commander argument parser (bad text: exit 2). */
export function kindCounts(what: string, min: number) {
  return (value: string): Record<string, number> => {
    const out: Record<string, number> = {};
    for (const part of value.split(',').map((p) => p.trim()).filter(Boolean)) {
      const m = /^([^=\s]+)\s*=\s*(\d+)$/.exec(part);
      if (!m) throw new InvalidArgumentError(`expected KIND=${what} pairs separated by commas (e.g. add=2,mul=1), got "${part}"`);
      const [, kind, n] = m;
      if (!KIND.test(kind)) throw new InvalidArgumentError(`"${kind}" is not a unit kind name`);
      if (kind in out) throw new InvalidArgumentError(`kind ${kind} is given twice`);
      const count = Number(n);
      if (count < min || count > 10_000) throw new InvalidArgumentError(`${what} of ${kind} must be ${min}..10000, got ${count}`);
      out[kind] = count;
    }
    if (Object.keys(out).length === 0) throw new InvalidArgumentError(`expected KIND=${what} pairs, got "${value}"`);
    return out;
  };
}

/** `2..32`, `4`, `2,4,8` or `2..8,16`: the folding factors of a sweep, ascending, each once. */
export function factorList(max: number) {
  return (value: string): number[] => {
    const set = new Set<number>();
    for (const part of value.split(',').map((p) => p.trim()).filter(Boolean)) {
      const m = /^(\d+)(?:\s*\.\.\s*(\d+))?$/.exec(part);
      if (!m) throw new InvalidArgumentError(`expected factors like 2..32 or 2,4,8, got "${part}"`);
      const lo = Number(m[1]);
      const hi = m[2] === undefined ? lo : Number(m[2]);
      if (lo < 1 || hi > max || lo > hi) throw new InvalidArgumentError(`factors must lie in 1..${max} with the smaller first, got "${part}"`);
      if (hi - lo > 4096) throw new InvalidArgumentError(`"${part}" is too many factors for one sweep`);
      for (let n = lo; n <= hi; n++) set.add(n);
    }
    if (set.size === 0) throw new InvalidArgumentError(`expected factors like 2..32, got "${value}"`);
    return [...set].sort((a, b) => a - b);
  };
}

/** Kinds of the design's operations, and of its units. */
export function kindsOf(design: Design): Set<string> {
  const kinds = new Set<string>(Object.keys(design.kinds));
  for (const u of design.units) kinds.add(u.kind);
  for (const n of design.nodes) if (n.kind !== 'input' && n.kind !== 'output') kinds.add(n.kind);
  return kinds;
}

/** Operations per kind (inputs and outputs are not folded). */
export function operationsPerKind(design: Design): Map<string, number> {
  const m = new Map<string, number>();
  for (const n of design.nodes) if (n.kind !== 'input' && n.kind !== 'output') m.set(n.kind, (m.get(n.kind) ?? 0) + 1);
  return m;
}

function checkKinds(design: Design, given: Record<string, number>, option: string): void {
  const known = kindsOf(design);
  for (const k of Object.keys(given)) {
    if (!known.has(k)) {
      const list = [...known].sort().join(', ');
      throw new CliError(`${option} names kind \`${k}\`, which the design ${design.name} does not use (its kinds: ${list || 'none'})`);
    }
  }
}

/**
 * Id prefix for new units of a kind: the letters before the digits of the design's own ids of
 * that kind when they all follow one such pattern (ADD1, ADD2 -> ADD), else the kind in capitals.
 */
function prefixFor(kind: string, existing: Unit[]): string {
  const prefixes = new Set(existing.map((u) => /^(.*?)(\d+)$/.exec(u.id)?.[1] ?? null));
  if (prefixes.size === 1) {
    const p = [...prefixes][0];
    if (p) return p;
  }
  return kind.toUpperCase().replace(/[^A-Z0-9_]/g, '_');
}

export interface UnitPlan {
  units: Unit[];
  made: string[];
  dropped: string[];
}

/**
 * The units to plan on. Kinds in `counts` get exactly that many units: the design's units of the
 * kind are kept in file order up to the count, further ones are made as PREFIX<n> numbered after
 * the highest number already used with that prefix, and surplus ones are dropped from the end.
 * A new unit takes its stages from `stages`, else from the design's first unit of the kind.
 * Dropping a unit that holds pinned operations is refused (exit 2): the pins would be lost.
 */
export function budgetUnits(design: Design, counts: Record<string, number> | null, stages: Record<string, number> | null): UnitPlan {
  if (stages) checkKinds(design, stages, '--stages');
  if (!counts) {
    if (stages) throw new CliError('--stages sets the pipeline stages of units that --units makes; give --units too');
    return { units: design.units.map((u) => ({ ...u })), made: [], dropped: [] };
  }
  checkKinds(design, counts, '--units');
  const taken = new Set<string>([...design.units.map((u) => u.id), ...design.nodes.map((n) => n.id)]);
  const made: string[] = [];
  const dropped: string[] = [];
  const out: Unit[] = [];
  const emitted = new Set<string>();
  const kindOrder: string[] = [];
  for (const u of design.units) if (!kindOrder.includes(u.kind)) kindOrder.push(u.kind);
  for (const k of Object.keys(counts)) if (!kindOrder.includes(k)) kindOrder.push(k);
  for (const kind of kindOrder) {
    if (emitted.has(kind)) continue;
    emitted.add(kind);
    const existing = design.units.filter((u) => u.kind === kind);
    const want = counts[kind];
    if (want === undefined) {
      out.push(...existing.map((u) => ({ ...u })));
      continue;
    }
    const keep = existing.slice(0, want);
    for (const u of existing.slice(want)) {
      const pinned = (design.folding.sets[u.id] ?? []).filter((v): v is string => v !== null);
      if (pinned.length > 0) {
        throw new CliError(`--units ${kind}=${want} would drop unit ${u.id}, which holds pinned operations (${pinned.join(', ')}); raise the count or take them out of its folding set`);
      }
      dropped.push(u.id);
    }
    out.push(...keep.map((u) => ({ ...u })));
    if (want > keep.length) {
      const s = stages?.[kind] ?? existing[0]?.stages;
      if (s === undefined) throw new CliError(`the design has no unit of kind \`${kind}\` to take pipeline stages from; give --stages ${kind}=S`);
      const prefix = prefixFor(kind, existing);
      let n = 0;
      for (const id of taken) {
        if (id.startsWith(prefix)) {
          const rest = id.slice(prefix.length);
          if (/^\d+$/.test(rest)) n = Math.max(n, Number(rest));
        }
      }
      for (let i = keep.length; i < want; i++) {
        let id: string;
        do id = `${prefix}${++n}`;
        while (taken.has(id));
        taken.add(id);
        made.push(id);
        out.push({ id, kind, stages: s });
      }
    }
  }
  return { units: out, made, dropped };
}
