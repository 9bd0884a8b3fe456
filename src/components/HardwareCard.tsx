import type { HardwareSide, HardwareSummary } from '../../shared/report/hardwareSummary';
import { Panel } from './Panel';

const ROWS: { key: keyof HardwareSide; label: string; note: string }[] = [
  { key: 'cells', label: 'Cells', note: 'generic cells, flip-flops included' },
  { key: 'flipFlops', label: 'Flip-flops', note: 'bits' },
  { key: 'depth', label: 'Logic depth', note: 'levels of generic cells on the longest path, not nanoseconds' },
  { key: 'factor', label: 'Cycles per sample', note: 'the folding factor' },
];

const n = (v: number | null) => (v === null ? 'loop' : v.toLocaleString('en-US'));

/** folded / parallel as "0.25x", or a dash where one side has no figure. */
function ratio(folded: number | null, parallel: number | null): string {
  if (folded === null || parallel === null || parallel === 0) return '–';
  return `${(folded / parallel).toFixed(2)}x`;
}

/**
 * Area and depth of one design's folded datapath beside its parallel reference, from the
 * hardware summary of `pleat rtl --area` uploaded with the run (docs/rtl.md, "The hardware
 * summary"). Generic-cell figures of one synthesis run, not a timing closure; the wording
 * holds for the demo's estimates too (their tool says they were not synthesized).
 */
export function HardwareCard({ summary }: { summary: HardwareSummary }) {
  const { folded, parallel, compared } = summary;
  return (
    <Panel
      id="run-hardware"
      title="Area and depth"
      className="mb-6"
      subtitle={`The hardware summary of pleat rtl --area uploaded with this run; figures by ${summary.tool}.`}
    >
      <table className="w-full max-w-2xl text-sm" data-testid="hardware-card">
        <thead>
          <tr className="border-b border-ink-200 text-left text-xs text-ink-600">
            <th scope="col" className="py-1.5 pr-4 font-medium">Figure</th>
            <th scope="col" className="py-1.5 pr-4 text-right font-medium">Folded</th>
            <th scope="col" className="py-1.5 pr-4 text-right font-medium">Parallel reference</th>
            <th scope="col" className="py-1.5 text-right font-medium">Folded ÷ parallel</th>
          </tr>
        </thead>
        <tbody>
          {ROWS.map((r) => (
            <tr key={r.key} className="border-b border-ink-100 last:border-0">
              <th scope="row" className="py-1.5 pr-4 text-left font-medium text-ink-800">
                {r.label} <span className="block text-xs font-normal text-ink-500">{r.note}</span>
              </th>
              <td className="py-1.5 pr-4 text-right tabular-nums" data-testid={`hardware-folded-${r.key}`}>{n(folded[r.key])}</td>
              <td className="py-1.5 pr-4 text-right tabular-nums">{n(parallel[r.key])}</td>
              <td className="py-1.5 text-right tabular-nums text-ink-600">{ratio(folded[r.key], parallel[r.key])}</td>
            </tr>
          ))}
        </tbody>
      </table>
      <p className="mt-3 text-xs text-ink-600">
        Both sides at {compared.width} bits with {compared.coefFrac} fraction bits in the coefficients; every multiplier counted
        as a general one; {compared.stages === 'folded' ? "each parallel operation has its folded unit's pipeline stages" : 'the parallel reference is not pipelined'}.
        {folded.depth === null || parallel.depth === null ? ' "loop": the netlist has a combinational loop, so it has no longest path.' : ''}{' '}
        These are estimates to compare runs by, an engineering aid and not a sign-off of the hardware.
      </p>
    </Panel>
  );
}
