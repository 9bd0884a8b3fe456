// Finds and reads pleat.config.yaml. Parsing takes the fast path (js-yaml, no positions); the
// engine's position lookup (shared/design/positions.ts) runs only when there is a problem to point at.
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { checkRules } from '../shared/report/rules';
import type { Diagnostic, Rules } from '../shared/types';

export const CONFIG_NAME = 'pleat.config.yaml';
/** A config is a few lines; anything this big is a mistake, not a config. */
const MAX_CONFIG_BYTES = 1024 * 1024;

export interface PleatConfig {
  /** Absolute path of the config file. */
  file: string;
  /** Its folder: the repository root, against which `designs` globs and report paths resolve. */
  dir: string;
  designs: string[] | null;
  rules: Rules;
  server: { url?: string; project?: string } | null;
}

export interface ConfigResult {
  config: PleatConfig | null;
  /** Errors make the config unusable (exit 2); warnings are printed and the check goes on. */
  diagnostics: Diagnostic[];
}

/** Walks up from `start` to the filesystem root; the first pleat.config.yaml found wins. */
export function findConfig(start: string): string | null {
  let dir = path.resolve(start);
  for (;;) {
    const candidate = path.join(dir, CONFIG_NAME);
    if (existsSync(candidate)) {
      try {
        if (statSync(candidate).isFile()) return candidate;
      } catch {
        /* unreadable entry: keep walking */
      }
    }
    const parent = path.dirname(dir);
    if (parent === dir) return null;
    dir = parent;
  }
}

interface Problem {
  severity: 'error' | 'warning';
  code: string;
  message: string;
  path: (string | number)[];
  /** Point at the key rather than its value (unknown keys). */
  atKey?: boolean;
}

const TOP_KEYS = ['designs', 'rules', 'server'];
const SERVER_KEYS = ['url', 'project'];

export async function loadConfig(file: string): Promise<ConfigResult> {
  const abs = path.resolve(file);
  const dir = path.dirname(abs);
  let text: string;
  try {
    const s = statSync(abs);
    if (!s.isFile()) return fail('config-unreadable', `${file} is not a file`);
    if (s.size > MAX_CONFIG_BYTES) return fail('config-too-large', `the config file is ${s.size} bytes; a config over ${MAX_CONFIG_BYTES} bytes is refused`);
    text = readFileSync(abs, 'utf8');
  } catch (err) {
    return fail('config-unreadable', `cannot read the config file: ${(err as Error).message}`);
  }

  let data: unknown;
  try {
    // Aliases are refused: a config has no use for them and they are the usual expansion bomb.
    // Loaded here rather than at start-up, so commands without a config do not pay for it.
    const { CORE_SCHEMA, loadAll } = await import('js-yaml');
    const alias = text.includes('*') ? await firstAlias(text) : null;
    if (alias) {
      return { config: null, diagnostics: [{ severity: 'error', code: 'config-syntax', message: 'the config file is not valid YAML: aliases are not allowed in a config file', line: alias[0], column: alias[1] }] };
    }
    const docs = loadAll(text, null, { schema: CORE_SCHEMA });
    if (docs.length > 1) {
      return { config: null, diagnostics: [await positioned(text, { severity: 'error', code: 'config-syntax', message: 'the config file holds more than one YAML document; keep one', path: [] })] };
    }
    data = docs.length === 0 ? null : docs[0];
  } catch (err) {
    const e = err as { reason?: string; message?: string; mark?: { line: number; column: number } };
    return {
      config: null,
      diagnostics: [
        {
          severity: 'error',
          code: 'config-syntax',
          message: `the config file is not valid YAML: ${e.reason ?? e.message ?? String(err)}`,
          line: e.mark ? e.mark.line + 1 : null,
          column: e.mark ? e.mark.column + 1 : null,
        },
      ],
    };
  }

  const problems: Problem[] = [];
  const config: PleatConfig = { file: abs, dir, designs: null, rules: {}, server: null };

  if (data === null || data === undefined) {
    // An empty config is allowed: default rules, paths from the command line.
  } else if (typeof data !== 'object' || Array.isArray(data)) {
    problems.push({ severity: 'error', code: 'config-type', message: 'the config must be a mapping with designs, rules and server', path: [] });
  } else {
    const obj = data as Record<string, unknown>;
    for (const key of Object.keys(obj)) {
      if (!TOP_KEYS.includes(key)) {
        problems.push({ severity: 'warning', code: 'config-unknown-key', message: `unknown key "${key}" ignored (known: ${TOP_KEYS.join(', ')})`, path: [key], atKey: true });
      }
    }
    if ('designs' in obj) {
      const d = obj.designs;
      if (typeof d === 'string' && d.trim() !== '') config.designs = [d];
      else if (Array.isArray(d) && d.length > 0 && d.every((g) => typeof g === 'string' && g.trim() !== '')) config.designs = d as string[];
      else problems.push({ severity: 'error', code: 'config-type', message: 'designs must be a glob or a non-empty list of globs, e.g. ["hw/**/*.fold.yaml"]', path: ['designs'] });
      if (config.designs) {
        config.designs.forEach((g, i) => {
          if (path.isAbsolute(g) || g.split('/').includes('..')) {
            problems.push({ severity: 'error', code: 'config-type', message: `design glob "${g}" must stay inside the repository (relative, without ..)`, path: typeof d === 'string' ? ['designs'] : ['designs', i] });
          }
        });
      }
    }
    if ('rules' in obj) {
      const { rules, problems: rp } = checkRules(obj.rules);
      config.rules = rules;
      for (const p of rp) {
        problems.push({ severity: 'error', code: 'config-rule', message: p.message, path: p.path, atKey: p.message.startsWith('unknown rule') });
      }
    }
    if ('server' in obj && obj.server !== null) {
      const s = obj.server;
      if (typeof s !== 'object' || Array.isArray(s)) {
        problems.push({ severity: 'error', code: 'config-type', message: 'server must be a mapping with url and project', path: ['server'] });
      } else {
        const so = s as Record<string, unknown>;
        config.server = {};
        for (const key of Object.keys(so)) {
          if (!SERVER_KEYS.includes(key)) {
            const hint = /token|secret|password/i.test(key) ? '; the token comes from the PLEAT_TOKEN environment variable, never from a file' : '';
            problems.push({ severity: key.match(/token|secret|password/i) ? 'error' : 'warning', code: 'config-unknown-key', message: `unknown key "server.${key}"${hint}`, path: ['server', key], atKey: true });
          }
        }
        if ('url' in so) {
          let ok = false;
          if (typeof so.url === 'string') {
            try {
              const u = new URL(so.url);
              ok = u.protocol === 'http:' || u.protocol === 'https:';
            } catch {
              ok = false;
            }
          }
          if (ok) config.server.url = so.url as string;
          else problems.push({ severity: 'error', code: 'config-type', message: 'server.url must be an http:// or https:// URL', path: ['server', 'url'] });
        }
        if ('project' in so) {
          if (typeof so.project === 'string' && /^[A-Za-z0-9._-]+$/.test(so.project)) config.server.project = so.project;
          else problems.push({ severity: 'error', code: 'config-type', message: 'server.project must be a project name of letters, digits, ".", "_" or "-"', path: ['server', 'project'] });
        }
      }
    }
  }

  if (problems.length === 0) return { config, diagnostics: [] };
  const diagnostics = await positionAll(text, problems);
  const hasError = diagnostics.some((d) => d.severity === 'error');
  return { config: hasError ? null : config, diagnostics };
}

function fail(code: string, message: string): ConfigResult {
  return { config: null, diagnostics: [{ severity: 'error', code, message, line: null, column: null }] };
}

/** Line and column of the first YAML alias (`*name`) in the text; null when there is none. */
async function firstAlias(text: string): Promise<[number, number] | null> {
  const { firstAliasPosition } = await import('../shared/design/positions');
  return firstAliasPosition(text);
}

async function positioned(text: string, p: Problem): Promise<Diagnostic> {
  return (await positionAll(text, [p]))[0];
}

/** Adds line and column to each problem from the source text, as for a design file. */
async function positionAll(text: string, problems: Problem[]): Promise<Diagnostic[]> {
  const { locate } = await import('../shared/design/positions');
  const bare: Diagnostic[] = problems.map((p) => ({ severity: p.severity, code: p.code, message: p.message, line: null, column: null, path: p.path }));
  const atKey = new Set(bare.filter((_, i) => problems[i].atKey));
  return locate(text, bare, (d) => atKey.has(d));
}
