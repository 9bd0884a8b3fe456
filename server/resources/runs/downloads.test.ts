// The run page's downloads: the stored report, edges and schedule as CSV, the RTL as a zip. The
// CSV is read back by csv-parse (the csv project's reader, RFC 4180); the zip is listed and
// unpacked by Info-ZIP's `unzip` (Debian's package), and its Verilog is compared with what the
// built `pleat rtl` writes for the same design file.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildReport } from '../../../shared/report/report';
import type { DesignReport, Report } from '../../../shared/types';
import { checkDesignText } from '../../engine';
import { cookieFor, makeMember, makeProject, randomCommit } from '../../test/factories';
import { startTestServer, type TestServer } from '../../test/server';
import type { Project, User } from '../../db/models';
import { ensureBuilt, pleat, ROOT } from '../../../tests/cli/helpers';
import { ingestRun } from './ingest';

let t: TestServer;
let project: Project;
let viewer: User;
let outsider: User;
let runId: number;
let report: Report;
const temps: string[] = [];
const temp = () => {
  const d = mkdtempSync(path.join(tmpdir(), 'pleat-dl-'));
  temps.push(d);
  return d;
};

const SENSOR = 'examples/sensor-frontend.fold.yaml';
const UNRETIMABLE = 'examples/envelope-unretimable.fold.yaml';

function entry(file: string, withSource = true): DesignReport {
  const text = readFileSync(path.join(ROOT, file), 'utf8');
  const d = checkDesignText(text, file, null).design;
  return (withSource ? { ...d, source: text } : d) as DesignReport;
}

beforeAll(async () => {
  await ensureBuilt();
  t = await startTestServer();
  project = await makeProject(t.ctx);
  viewer = await makeMember(t.ctx, project, 'viewer');
  outsider = await makeMember(t.ctx, await makeProject(t.ctx), 'lead');
  const bare = { ...entry('examples/channelizer-taps.fold.yaml', false), name: 'no-source' } as DesignReport;
  report = buildReport({ version: '0.1.0', git: { branch: 'main', commit: randomCommit() }, rules: {}, designs: [entry(SENSOR), entry(UNRETIMABLE), bare] });
  runId = (await ingestRun(t.ctx, project, report)).id;
}, 300_000);
afterAll(async () => {
  for (const d of temps) rmSync(d, { recursive: true, force: true });
  await t?.close();
});

const get = (p: string, who: User = viewer) =>
  t.http().get(p).set('Cookie', cookieFor(t.ctx, who)).buffer(true).parse((res, cb) => {
    const chunks: Buffer[] = [];
    res.on('data', (c: Buffer) => chunks.push(c));
    res.on('end', () => cb(null, Buffer.concat(chunks)));
  });
const url = (file: string, design?: string) => `/api/runs/${runId}/download/${file}${design ? `?design=${encodeURIComponent(design)}` : ''}`;

describe('GET /api/runs/:id/download/:file', () => {
  it('gives the stored report as a JSON attachment', async () => {
    const res = await get(url('report.json'));
    expect(res.status).toBe(200);
    expect(res.headers['content-disposition']).toMatch(/^attachment; filename="?[\w.-]+\.pleat\.json"?$/);
    expect(JSON.parse((res.body as Buffer).toString('utf8'))).toEqual(JSON.parse(JSON.stringify(report)));
  });

  it('gives the edges of a design as CSV with one record per edge of the report', async () => {
    const d = report.designs[0]!;
    const res = await get(url('edges.csv', d.name!));
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    // csv-parse reads RFC 4180 (the csv project's reference reader).
    const rows = parse((res.body as Buffer).toString('utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.length).toBe(d.edges!.length);
    d.edges!.forEach((e, i) => {
      expect(rows[i]).toEqual({
        from: e.from, to: e.to, delays: String(e.delays), folded_delay: e.foldedDelay === null ? '' : String(e.foldedDelay),
        retimed_delays: String(e.retimedDelays), retimed_folded_delay: e.retimedFoldedDelay === null ? '' : String(e.retimedFoldedDelay),
      });
    });
  });

  it('leaves the retimed columns empty for a plan no retiming can fix', async () => {
    const d = report.designs[1]!;
    expect(d.retiming?.feasible).toBe(false);
    const rows = parse((await get(url('edges.csv', d.name!))).body.toString('utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.every((r) => r.retimed_delays === '' && r.retimed_folded_delay === '')).toBe(true);
  });

  it('gives the schedule as CSV: a record per partition and unit, the operands as the control tables select them', async () => {
    const d = report.designs[0]!;
    const rows = parse((await get(url('schedule.csv', d.name!))).body.toString('utf8'), { columns: true }) as Record<string, string>[];
    expect(rows.length).toBe(d.factor! * d.schedule!.length);
    for (const r of rows) {
      const t0 = Number(r.partition);
      const unit = d.schedule!.find((u) => u.unit === r.unit)!;
      expect(r.node).toBe(unit.slots[t0] ?? '');
      if (r.node) {
        // Every operand port the multiplexer tables read in this partition is named.
        const ports = d.control!.muxes.filter((m) => m.unit === r.unit && m.select[t0] !== null).map((m) => `a${m.port}=`);
        for (const p of ports) expect(r.operands).toContain(p);
        expect(r.operation).not.toBe('');
      }
    }
  });

  it('zips the RTL of a feasible plan; the Verilog is what `pleat rtl` writes for the same file', async () => {
    const res = await get(url('rtl.zip', report.designs[0]!.name!));
    expect(res.status, (res.body as Buffer).toString('utf8').slice(0, 300)).toBe(200);
    expect(res.headers['content-type']).toBe('application/zip');
    const dir = temp();
    const zipFile = path.join(dir, 'rtl.zip');
    writeFileSync(zipFile, res.body as Buffer);
    // Info-ZIP checks every entry's CRC (-t) and unpacks the archive.
    execFileSync('unzip', ['-tq', zipFile]);
    execFileSync('unzip', ['-q', zipFile, '-d', path.join(dir, 'zip')]);
    const [top] = readdirSync(path.join(dir, 'zip'));
    const fromZip = path.join(dir, 'zip', top!);

    // The CLI, run as a user runs it, on the same design file from the repository root.
    const out = path.join(temp(), 'rtl');
    const cli = await pleat(['rtl', SENSOR, '--out', out]);
    expect(cli.exitCode, cli.stderr).toBe(0);
    const cliFiles = readdirSync(out).sort();
    expect(readdirSync(fromZip).sort()).toEqual(cliFiles);
    expect(cliFiles.filter((f) => f.endsWith('.v')).length).toBeGreaterThan(1);
    for (const f of cliFiles) expect(readFileSync(path.join(fromZip, f), 'utf8'), f).toBe(readFileSync(path.join(out, f), 'utf8'));
  }, 120_000);

  it('refuses the RTL of a plan without a feasible datapath, and of a run without the design text, saying why (422)', async () => {
    const infeasible = await get(url('rtl.zip', report.designs[1]!.name!));
    expect(infeasible.status).toBe(422);
    expect(JSON.parse(infeasible.body.toString('utf8')).error.message).toMatch(/no feasible folded datapath/);
    const bare = await get(url('rtl.zip', 'no-source'));
    expect(bare.status).toBe(422);
    expect(JSON.parse(bare.body.toString('utf8')).error.message).toMatch(/without the text of this design/);
  });

  it('asks for a design, knows only its own files and designs, and hides the run from outsiders', async () => {
    expect((await get(url('edges.csv'))).status).toBe(400);
    expect((await get(url('edges.csv', 'no such design'))).status).toBe(404);
    expect((await get(url('secrets.txt'))).status).toBe(404);
    expect((await get(url('report.json'), outsider)).status).toBe(404);
    expect((await t.http().get(url('report.json'))).status).toBe(401);
  });
});
