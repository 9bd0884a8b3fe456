// Turns the paths of a command line (files, folders, globs) or the `designs` globs of the config
// into a sorted, de-duplicated list of design files.
import { statSync } from 'node:fs';
import path from 'node:path';

export const DESIGN_SUFFIX = '.fold.yaml';
/** Folders never searched: dependency trees and version-control internals. */
export const IGNORED = ['**/node_modules/**', '**/.git/**'];

export interface Expansion {
  /** Absolute paths, in a stable order, each once. */
  files: string[];
  /** Command-line paths that named nothing: a missing file, or a glob/folder without designs. */
  problems: string[];
}

const GLOB_CHARS = /[*?[\]{}!]/;

async function globIn(patterns: string[], cwd: string): Promise<string[]> {
  // tinyglobby is loaded only when a folder or glob has to be walked.
  const { globSync } = await import('tinyglobby');
  const found = globSync(patterns, { cwd, absolute: true, onlyFiles: true, ignore: IGNORED, dot: false });
  return found.map((f) => path.resolve(f)).sort();
}

/** Expands command-line paths relative to cwd. Explicit files are taken whatever their suffix. */
export async function expandPaths(paths: string[], cwd: string): Promise<Expansion> {
  const files: string[] = [];
  const problems: string[] = [];
  for (const p of paths) {
    const abs = path.resolve(cwd, p);
    let kind: 'file' | 'dir' | null = null;
    try {
      const s = statSync(abs);
      kind = s.isDirectory() ? 'dir' : 'file';
    } catch {
      kind = null;
    }
    if (kind === 'file') files.push(abs);
    else if (kind === 'dir') {
      const found = await globIn([`**/*${DESIGN_SUFFIX}`], abs);
      if (found.length === 0) problems.push(`no *${DESIGN_SUFFIX} files in folder ${p}`);
      files.push(...found);
    } else if (GLOB_CHARS.test(p)) {
      const found = await globIn([toPosix(p)], cwd);
      if (found.length === 0) problems.push(`no files match ${p}`);
      files.push(...found);
    } else {
      problems.push(`no such file or folder: ${p}`);
    }
  }
  return { files: unique(files), problems };
}

/** Expands the config's `designs` globs, relative to the config file's folder. */
export async function expandGlobs(globs: string[], dir: string): Promise<string[]> {
  return unique(await globIn(globs.map(toPosix), dir));
}

function unique(files: string[]): string[] {
  const seen = new Set<string>();
  const out: string[] = [];
  for (const f of files) {
    if (!seen.has(f)) {
      seen.add(f);
      out.push(f);
    }
  }
  return out;
}

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

/** A path as the report names it: relative to the root, forward slashes. */
export function reportPath(abs: string, root: string): string {
  const rel = path.relative(root, abs);
  return toPosix(rel === '' ? path.basename(abs) : rel);
}
