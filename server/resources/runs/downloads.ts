// The files a run page offers: the stored report as JSON, one design's edges and its schedule as
// CSV (RFC 4180, through csv-stringify), and the folded datapath's Verilog as a zip (jszip) made by
// the engine's own RTL generator from the design text the run carries.
import { stringify } from 'csv-stringify/sync';
import JSZip from 'jszip';
import pkg from '../../../package.json';
import { rtlUnavailable } from '../../../shared/hardware/rtlAvailable';
import { rtlFilesOfText } from '../../../shared/hardware/rtlFiles';
import type { DesignReport, SignalSource } from '../../../shared/types';

export const DOWNLOADS = ['report.json', 'edges.csv', 'schedule.csv', 'rtl.zip'] as const;
export type Download = (typeof DOWNLOADS)[number];

/** A file name made only of safe characters, for Content-Disposition (the design name comes from a file). */
export function fileStem(s: string): string {
  const stem = s.replace(/\.fold\.ya?ml$/i, '').replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^[-.]+|-+$/g, '');
  return stem.slice(0, 80) || 'design';
}

const csv = (header: string[], rows: (string | number | null)[][]) => stringify([header, ...rows.map((r) => r.map((v) => (v === null ? '' : v)))], { record_delimiter: '\r\n' });

/** One line per edge: delays, folded delay, and both after retiming (empty where the report has none). */
export function edgesCsv(d: DesignReport): string {
  const retimed = d.retiming ? d.retiming.feasible : true;
  return csv(
    ['from', 'to', 'delays', 'folded_delay', 'retimed_delays', 'retimed_folded_delay'],
    (d.edges ?? []).map((e) => [e.from, e.to, e.delays, e.foldedDelay, retimed ? e.retimedDelays : null, retimed ? e.retimedFoldedDelay : null]),
  );
}

const sourceLabel = (s: SignalSource) => (s.kind === 'unit' ? s.unit : s.kind === 'input' ? s.node : s.kind === 'register' ? `R${s.register}` : '0');

/**
 * The control schedule: one line per partition and unit, time first, with the node the unit
 * starts and, when the report carries the control tables, what each operand port selects.
 */
export function scheduleCsv(d: DesignReport): string {
  const N = d.factor ?? 0;
  const control = d.control ?? null;
  const rows: (string | number | null)[][] = [];
  for (let t = 0; t < N; t++) {
    for (const u of d.schedule ?? []) {
      const node = u.slots[t] ?? null;
      const unit = control?.units.find((c) => c.unit === u.unit);
      const op = unit?.partitions[t]?.op ?? null;
      const operands = control
        ? control.muxes
            .filter((m) => m.unit === u.unit && m.select[t] !== null)
            .sort((a, b) => a.port - b.port)
            .map((m) => `a${m.port}=${sourceLabel(m.sources[m.select[t]!]!)}`)
            .join(' ')
        : null;
      rows.push([t, u.unit, u.kind, u.stages, node, node ? op : null, node ? operands : null]);
    }
  }
  return csv(['partition', 'unit', 'kind', 'stages', 'node', 'operation', 'operands'], rows);
}

/** The Verilog, testbench and manifest `pleat rtl` would write for this design, zipped under `<top>/`. */
export async function rtlZip(d: DesignReport): Promise<{ ok: true; zip: Buffer; top: string } | { ok: false; reason: string }> {
  const why = rtlUnavailable(d);
  if (why) return { ok: false, reason: why };
  const built = rtlFilesOfText((d as { source?: string }).source!, d.file, pkg.version);
  if (!built.ok) return built;
  const zip = new JSZip();
  const folder = zip.folder(built.top)!;
  // A fixed date keeps the archive the same for the same design (zip stores local times).
  for (const f of built.files) folder.file(f.name, f.text, { date: new Date(Date.UTC(2020, 0, 1)) });
  return { ok: true, top: built.top, zip: await zip.generateAsync({ type: 'nodebuffer', compression: 'DEFLATE', platform: 'UNIX' }) };
}
