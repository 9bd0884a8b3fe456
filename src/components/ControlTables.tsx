import { useMemo, type ReactNode } from 'react';
import type { ControlTables as Control, MuxTable, OutputControl, RegisterTable, SignalSource } from '../../shared/types';
import { num } from './format';
import { tableClass } from './Panel';
import { PartitionGrid } from './PartitionGrid';

/** How a source reads in a cell: the unit, the input, the register, or the constant 0 (as `pleat simulate --tables` prints it). */
export function sourceShort(s: SignalSource): string {
  switch (s.kind) {
    case 'unit':
      return s.unit;
    case 'input':
      return s.node;
    case 'register':
      return `R${s.register}`;
    case 'zero':
      return '0';
  }
}

/** The same in words, for titles and screen readers. */
function sourceWords(s: SignalSource): string {
  switch (s.kind) {
    case 'unit':
      return `result of unit ${s.unit}`;
    case 'input':
      return `input ${s.node}`;
    case 'register':
      return `register R${s.register}`;
    case 'zero':
      return 'constant 0';
  }
}

/** A variable instance `name@j` with its age as a superscript, as the allocation table shows it. */
function Instance({ value }: { value: string }) {
  const at = value.lastIndexOf('@');
  const name = at < 0 ? value : value.slice(0, at);
  const age = at < 0 ? null : value.slice(at + 1);
  return (
    <>
      <span className="font-medium">{name}</span>
      {age && (
        <sup className="ml-0.5 text-ember-700" title={`${age} iteration${age === '1' ? '' : 's'} old`}>
          @{age}
        </sup>
      )}
    </>
  );
}

/**
 * The control tables of the folded datapath (shared/hardware/control.ts): the operand multiplexers of
 * every unit, what every register loads, and the timing of the inputs and outputs. Time runs to
 * the right, one column per partition, as in the schedule grid and the allocation table.
 */
export function ControlTables({ control, omitted }: { control: Control | null | undefined; omitted?: string }) {
  if (control === null) return <p className="text-sm text-ink-600">No control tables: the folded datapath cannot exist as planned.</p>;
  if (control === undefined)
    return (
      <p className="text-sm text-ink-600">
        {omitted
          ? `Left out of this report: ${omitted}. Run pleat simulate --tables or pleat rtl for the full tables.`
          : 'This report carries no control tables (it was made by a Pleat version that did not write them).'}
      </p>
    );
  return <ControlBody control={control} />;
}

function ControlBody({ control }: { control: Control }) {
  const N = control.factor;
  const muxStats = useMemo(() => {
    let inputs = 0;
    let widest = 0;
    for (const m of control.muxes) {
      inputs += m.sources.length;
      widest = Math.max(widest, m.sources.length);
    }
    return { inputs, widest };
  }, [control.muxes]);

  return (
    <div data-testid="control-tables">
      <ul className="mb-4 flex flex-wrap gap-2 text-xs" aria-label="Size of the control">
        <Chip label="operand ports" value={num(control.muxes.length)} />
        <Chip label="multiplexer inputs in all" value={num(muxStats.inputs)} />
        <Chip label="widest multiplexer" value={`${muxStats.widest} input${muxStats.widest === 1 ? '' : 's'}`} />
        <Chip label="registers" value={num(control.registers)} />
        <Chip label="placed by" value={control.allocationSource === 'analysis' ? 'the allocation of the analysis' : 'the control tables (see note)'} />
        <Chip label="latency added by retiming" value={`${control.latencyAdded} iteration${control.latencyAdded === 1 ? '' : 's'}`} />
      </ul>
      {control.allocationNote && <p className="mb-4 text-sm text-ink-700">{control.allocationNote}</p>}

      <h3 className="mb-2 text-sm font-bold text-ink-800">Operand multiplexers</h3>
      <MuxGrid muxes={control.muxes} factor={N} />

      <h3 className="mt-6 mb-2 text-sm font-bold text-ink-800">Register loads</h3>
      <RegisterLoadGrid tables={control.registerTables} factor={N} />

      <h3 className="mt-6 mb-2 text-sm font-bold text-ink-800">Input and output timing</h3>
      <TimingTable control={control} />
    </div>
  );
}

function Chip({ label, value }: { label: string; value: ReactNode }) {
  return (
    <li className="rounded border border-ink-200 bg-ink-50 px-2 py-1">
      <span className="text-ink-600">{label}:</span> <span className="font-bold text-ink-900">{value}</span>
    </li>
  );
}

function MuxGrid({ muxes, factor }: { muxes: MuxTable[]; factor: number }) {
  if (muxes.length === 0) return <p className="text-sm text-ink-600">No unit reads an operand.</p>;
  return (
    <>
      <PartitionGrid
        testId="mux-table"
        rows={muxes.length}
        factor={factor}
        label="Multiplexer table (scrolls)"
        caption={`Operand multiplexers: for each operand port of each unit, the source it selects in each of the ${factor} partitions, and how many inputs its multiplexer has; a hatched cell is a partition in which the port is not read`}
        corner="Port"
        trailing="Inputs"
        rowKey={(i) => `${muxes[i].unit}.${muxes[i].port}`}
        rowHeader={(i) => (
          <>
            {muxes[i].unit}
            <span className="text-ink-500">.a{muxes[i].port}</span>
          </>
        )}
        idle={(i, t) => ((muxes[i].select[t] ?? null) === null ? 'not read' : null)}
        cell={(i, t) => {
          const m = muxes[i];
          const sel = m.select[t]!;
          const src = m.sources[sel];
          const read = m.reads[t];
          const value = read ? (read.variable ?? read.from) : null;
          return (
            <span className="block" title={`select ${sel}: ${sourceWords(src)}${read ? `, the value of edge ${read.from} → ${read.to}${read.variable ? ` (${read.variable})` : ''}` : ''}`}>
              <span className={`font-medium ${src.kind === 'zero' ? 'text-ink-500' : ''}`} data-source>
                {sourceShort(src)}
              </span>
              {value && value !== sourceShort(src) && <span className="block text-[10px] leading-tight text-ink-500">{value}</span>}
            </span>
          );
        }}
        trailingCell={(i) => {
          const m = muxes[i];
          const labels = m.sources.map(sourceShort).join(', ');
          return (
            <span className="inline-flex max-w-64 items-baseline gap-2" title={labels}>
              <span className="font-bold" data-mux-inputs>
                {m.sources.length}
              </span>
              <span className="truncate text-xs text-ink-500">{labels}</span>
            </span>
          );
        }}
      />
      <p className="mt-2 text-xs text-ink-600">
        A cell is the source the port selects in that partition (a unit's result, an input, a register R&lt;k&gt; or the constant 0), with the value it
        carries in small print; “Inputs” is the size of the multiplexer and its inputs in select order.
      </p>
    </>
  );
}

function RegisterLoadGrid({ tables, factor }: { tables: RegisterTable[]; factor: number }) {
  if (tables.length === 0) return <p className="text-sm text-ink-600">No registers are needed.</p>;
  return (
    <>
      <PartitionGrid
        testId="register-load-table"
        rows={tables.length}
        factor={factor}
        label="Register load table (scrolls)"
        caption={`Register loads: for each register, the value it loads at the end of each of the ${factor} partitions and where from; an empty cell means the register holds its value`}
        corner="Register"
        rowKey={(i) => String(tables[i].register)}
        rowHeader={(i) => `R${tables[i].register}`}
        cell={(i, t) => {
          const load = tables[i].loads[t] ?? null;
          if (load === null)
            return (
              <span className="block text-ink-500" title={tables[i].holds[t] ? `holds ${tables[i].holds[t]}` : 'holds'}>
                <span aria-hidden="true">—</span>
                <span className="sr-only">holds</span>
              </span>
            );
          return (
            <span className="block" title={`loads ${load.variable} from ${sourceWords(load.source)} at the end of partition ${t}`}>
              <Instance value={load.variable} />
              <span className="block text-[10px] leading-tight text-ink-500">from {sourceShort(load.source)}</span>
            </span>
          );
        }}
      />
      <p className="mt-2 text-xs text-ink-600">
        {tables.length} register{tables.length === 1 ? '' : 's'}. A register loads at the end of the partition of its column (the allocation table above
        shows what it then holds, one column later); “—” means it holds its value.
      </p>
    </>
  );
}

/** The first cycle with a valid strobe (docs/rtl.md: N·max(0, lag) + cycle + 1). */
function firstStrobe(o: OutputControl, N: number): number {
  return N * Math.max(0, o.lag) + o.cycle + 1;
}

function TimingTable({ control }: { control: Control }) {
  const N = control.factor;
  const rows = control.inputs.length + control.outputs.length;
  if (rows === 0) return <p className="text-sm text-ink-600">This design has no inputs or outputs.</p>;
  return (
    <div className="relative isolate max-h-[26rem] overflow-auto rounded-lg border border-ink-200" tabIndex={0} role="region" aria-label="Input and output timing (scrolls)" data-testid="io-timing">
      <table className={tableClass.table}>
        <caption className="sr-only">
          Timing of the inputs and outputs: cycle c runs partition c mod {N} of iteration floor(c / {N}); sample n of an input belongs to iteration n
        </caption>
        <thead>
          <tr>
            <th scope="col" className={`${tableClass.th} sticky top-0`}>
              Port
            </th>
            <th scope="col" className={`${tableClass.th} sticky top-0`}>
              Fed from
            </th>
            <th scope="col" className={`${tableClass.th} sticky top-0`}>
              When
            </th>
            <th scope="col" className={`${tableClass.th} sticky top-0 text-right`}>
              First valid strobe
            </th>
          </tr>
        </thead>
        <tbody>
          {control.inputs.map((x) => (
            <tr key={`in:${x.node}`} data-input={x.node}>
              <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                {x.node} <span className="text-xs font-normal text-ink-500">input</span>
              </th>
              <td className={`${tableClass.td} text-ink-500`}>—</td>
              <td className={tableClass.td}>
                {x.slot === null
                  ? `held: sample n is read in cycles ${N}n to ${N}n+${N - 1}`
                  : `sample n is read in cycle ${N}n+${x.slot} only (partition ${x.slot})`}
              </td>
              <td className={`${tableClass.td} text-right text-ink-500`}>—</td>
            </tr>
          ))}
          {control.outputs.map((o) => (
            <tr key={`out:${o.node}`} data-output={o.node}>
              <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                {o.node} <span className="text-xs font-normal text-ink-500">output</span>
              </th>
              <td className={tableClass.td}>{o.mode === 'none' ? '—' : sourceShort(o.source)}</td>
              <td className={tableClass.td}>
                {o.mode === 'slot'
                  ? `loads at the end of partition ${o.cycle}`
                  : o.mode === 'tap'
                    ? `taken when produced: end of cycle ${o.cycle} (partition ${o.cycle % N})`
                    : 'no edge feeds it'}
                {o.mode !== 'none' && o.lag !== 0 && <span className="text-ink-500"> · lags {o.lag} iteration{Math.abs(o.lag) === 1 ? '' : 's'}</span>}
              </td>
              <td className={`${tableClass.td} text-right whitespace-nowrap`}>
                {o.mode === 'none' ? (
                  '—'
                ) : (
                  <>
                    cycle {firstStrobe(o, N)}
                    <span className="text-ink-500">
                      {' '}
                      + {N}k carries sample {o.firstSample}+k
                    </span>
                  </>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
