// The JSON text of each run and design row of the branch history page (RunListItem and
// RunDesignRow of shared/report/api.ts, in the presenters' key order and number and date notation),
// written by PostgreSQL once, when the row is written, into a `page_json` column (migration
// 011-history-page-json), instead of at every read of a page. Triggers keep the column up to date
// on every INSERT and UPDATE, whoever writes the row (the upload, migrations, the bench's bulk
// load). A change of these expressions needs a migration that re-creates the trigger functions
// (pageJsonTriggers) and rewrites the column. history.test.ts holds the pages made of them to the
// presenters, byte for byte.
import { jsonDate, jsonFloat, jsonObject, jsonPlain, jsonString, jsonWord } from '../../db/jsonSql';
import type { DesignRow, RunRow } from './compare';
import type { DesignSummary } from './summary';
import { presentDesign, presentRun } from './present';

/** presentRun's fields of a runs row `r`, without the closing brace: the page adds `,"designs":[...]}`. */
export const runHead = (r: string): string => jsonObject([
  ['id', jsonPlain(`${r}.id`, true)],
  ['branch', jsonString(`${r}.branch`, true)],
  ['commit', jsonString(`${r}.commit`, true)],
  ['baseBranch', jsonString(`${r}.base_branch`)],
  ['baseCommit', jsonString(`${r}.base_commit`)],
  ['verdict', jsonWord(`${r}.verdict`)],
  ['toolVersion', jsonString(`${r}.tool_version`, true)],
  ['createdAt', jsonDate(`${r}.created_at`)],
  ['message', jsonString(`${r}.commit_message`)],
  ['author', jsonString(`${r}.commit_author`)],
  ['utilizationFloor', jsonFloat(`${r}.utilization_floor`)],
  ['summary', jsonObject([
    ['designs', jsonPlain(`${r}.design_count`, true)],
    ['failed', jsonPlain(`${r}.failed_count`, true)],
    ['errors', jsonPlain(`${r}.error_count`, true)],
    ['utilization', jsonFloat(`${r}.utilization`)],
    ['registerMinimum', jsonPlain(`${r}.register_minimum`)],
    ['violations', jsonPlain(`${r}.violation_count`, true)],
  ])],
]).replace(/, '\}'\)$/, ')');

/** presentDesign's fields of a run_designs row `d`, without the closing brace: the page adds the hardware's tail and `}`. */
export const designHead = (d: string): string => jsonObject([
  ['name', jsonString(`${d}.design_name`, true)],
  ['file', jsonString(`${d}.file`, true)],
  ['status', jsonWord(`${d}.status`)],
  ['utilization', jsonFloat(`${d}.utilization`)],
  ['registerMinimum', jsonPlain(`${d}.register_minimum`)],
  ['negativeEdges', jsonPlain(`${d}.negative_edge_count`)],
  ['retimingFeasible', jsonPlain(`${d}.retiming_feasible`)],
  ['violations', jsonPlain(`${d}.violation_count`, true)],
  ['factor', jsonPlain(`${d}.factor`)],
  ['units', jsonPlain(`${d}.unit_count`)],
  ['latencyAdded', jsonPlain(`${d}.latency_added`)],
]).replace(/, '\}'\)$/, ')');

/** `,"hardware":{...}` of a run_design_hardware row `h` (DesignHardware). */
export const hardwareTail = (h: string): string => jsonObject([
  ['version', jsonPlain(`${h}.version`, true)],
  ['folded', jsonObject([['cells', jsonPlain(`${h}.folded_cells`, true)], ['flipFlops', jsonPlain(`${h}.folded_flip_flops`, true)], ['depth', jsonPlain(`${h}.folded_depth`)], ['factor', jsonPlain(`${h}.folded_factor`, true)]])],
  ['parallel', jsonObject([['cells', jsonPlain(`${h}.parallel_cells`, true)], ['flipFlops', jsonPlain(`${h}.parallel_flip_flops`, true)], ['depth', jsonPlain(`${h}.parallel_depth`)], ['factor', jsonPlain(`${h}.parallel_factor`, true)]])],
]).replace(/^concat\('\{/, `concat(',"hardware":{`);

/**
 * The trigger functions and triggers that write `page_json` of runs, run_designs and
 * run_design_hardware before every INSERT and UPDATE. Each function pins extra_float_digits to
 * PostgreSQL's default (1: the shortest digits that read back exactly, which jsonFloat relies on),
 * whatever the writing session has set.
 */
export function pageJsonTriggers(): string {
  const one = (table: string, fn: string, expr: string) => `
CREATE OR REPLACE FUNCTION ${fn}() RETURNS trigger LANGUAGE plpgsql SET extra_float_digits = 1 AS $fn$
BEGIN
  -- An INSERT that brings its text (the upload, written by the presenters) keeps it; every other
  -- INSERT and every UPDATE gets the text of the row's values.
  IF TG_OP = 'UPDATE' OR NEW.page_json IS NULL THEN
    NEW.page_json := ${expr};
  END IF;
  RETURN NEW;
END $fn$;
DROP TRIGGER IF EXISTS ${table}_page_json ON ${table};
CREATE TRIGGER ${table}_page_json BEFORE INSERT OR UPDATE ON ${table} FOR EACH ROW EXECUTE FUNCTION ${fn}();`;
  return [
    one('runs', 'pleat_runs_page_json', runHead('NEW')),
    one('run_designs', 'pleat_run_designs_page_json', designHead('NEW')),
    one('run_design_hardware', 'pleat_run_design_hardware_page_json', hardwareTail('NEW')),
  ].join('\n');
}

// The upload knows every value of its rows but the run's id and time, which PostgreSQL gives: it
// writes the texts with the presenters themselves and passes them to its statement, which adds the
// id and the time (pageJsonOf below), so the triggers skip their expressions for those rows (their
// share of an upload's PostgreSQL CPU: about 0.5 to 1 ms of 2 to 3, measured alone).
const EPOCH = '"1970-01-01T00:00:00.000Z"';
const ID_KEY = '{"id":0';

/**
 * presentRun's text of a run to be written, in two parts: after `{"id":<id>` up to `"createdAt":`,
 * and after the time, without the closing brace (as runHead writes it).
 */
export function runHeadParts(r: Omit<RunRow, 'id' | 'created_at' | 'project_id'>): [string, string] {
  const text = JSON.stringify(presentRun({ ...r, id: 0, project_id: 0, created_at: new Date(0) }));
  // Quotes inside string values are escaped, so the key's own `,"createdAt":"` is the first one.
  const at = text.indexOf(`,"createdAt":${EPOCH}`) + ',"createdAt":'.length;
  if (!text.startsWith(ID_KEY) || at < ',"createdAt":'.length) throw new Error('presentRun no longer starts with id or lacks createdAt');
  return [text.slice(ID_KEY.length, at), text.slice(at + EPOCH.length, -1)];
}

/** SQL of a run's page_json from its id, its time and the two parts of runHeadParts (SQL each). */
export const runHeadSql = (id: string, at: string, before: string, after: string): string =>
  `concat('{"id":', ${id}, ${before}, ${jsonDate(at)}, ${after})`;

/** presentDesign's text of a design row to be written (no hardware: that row's own trigger writes its tail), without the closing brace. */
export function designHeadText(d: DesignSummary): string {
  const row: DesignRow = {
    run_id: 0, design_name: d.designName, file: d.file, status: d.status, utilization: d.utilization ?? null,
    register_minimum: d.registerMinimum ?? null, negative_edge_count: d.negativeEdgeCount ?? null,
    retiming_feasible: d.retimingFeasible ?? null, violation_count: d.violationCount, factor: d.factor ?? null,
    unit_count: d.unitCount ?? null, latency_added: d.latencyAdded ?? null,
  };
  return JSON.stringify(presentDesign(row)).slice(0, -1);
}
