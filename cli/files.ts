// Turns the paths of a command line (files, folders, globs) or the `designs` globs of the config
// into a sorted, de-duplicated list of design files.
import { lstatSync, readdirSync, realpathSync, statSync } from 'node:fs';
import path from 'node:path';

export const DESIGN_SUFFIX = '.fold.yaml';
/** Designs written as JSON, usually by scripts (docs/format.md). */
export const JSON_DESIGN_SUFFIX = '.fold.json';
/** Folders never searched: dependency trees and version-control internals. */
export const IGNORED = ['**/node_modules/**', '**/.git/**'];
const IGNORED_NAMES = new Set(['node_modules', '.git']);

/** A path the walk met but could not read: reported as a `file-unreadable` error (docs/cli.md). */
export interface Unreadable {
  abs: string;
  message: string;
}

export interface Expansion {
  /** Absolute paths, in a stable order, each once (two paths to one file count once). */
  files: string[];
  /** Command-line paths that named nothing: a missing file, or a glob/folder without designs. */
  problems: string[];
  /** Broken links, link loops and folders that cannot be read, met on the way. */
  unreadable: Unreadable[];
}

const GLOB_CHARS = /[*?[\]{}!]/;

/** Why a path that lstat sees cannot be followed, in words; null when it can. */
function linkProblem(abs: string): string | null {
  try {
    statSync(abs);
    return null;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ELOOP') return 'a loop of symbolic links: it never reaches a file';
    if (code === 'ENOENT') return 'a broken symbolic link: what it points to does not exist';
    return `cannot follow the symbolic link (${code ?? (e as Error).message})`;
  }
}

/** What a path is, when it is neither a folder nor a regular file. */
function specialKind(d: { isFIFO(): boolean; isSocket(): boolean; isCharacterDevice(): boolean; isBlockDevice(): boolean }): string | null {
  if (d.isFIFO()) return 'a named pipe (FIFO)';
  if (d.isSocket()) return 'a socket';
  if (d.isCharacterDevice() || d.isBlockDevice()) return 'a device';
  return null;
}

/**
 * What the glob library skips without a word under `root`: folders that cannot be listed, links
 * that lead nowhere or round in a loop, and named pipes or devices whose name looks like a
 * design (`nameMatches`). A check of `.` must not pass with designs left unread. Links to
 * folders are not followed here; the glob follows them and a file met twice counts once.
 */
function walkProblems(root: string, nameMatches: (name: string) => boolean): Unreadable[] {
  const out: Unreadable[] = [];
  const stack = [root];
  while (stack.length) {
    const dir = stack.pop()!;
    let entries;
    try {
      entries = readdirSync(dir, { withFileTypes: true });
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (dir === root && code === 'ENOENT') continue; // a glob whose folder does not exist matches nothing
      out.push({ abs: dir, message: `cannot read the folder (${code === 'EACCES' || code === 'EPERM' ? 'permission denied' : (code ?? (e as Error).message)}); designs in it would go unchecked` });
      continue;
    }
    for (const d of entries) {
      if (d.name.startsWith('.') || IGNORED_NAMES.has(d.name)) continue;
      const abs = path.join(dir, d.name);
      if (d.isDirectory()) stack.push(abs);
      else if (d.isSymbolicLink()) {
        const why = linkProblem(abs);
        if (why && nameMatches(d.name)) out.push({ abs, message: why });
        else if (!why) {
          try {
            const kind = specialKind(statSync(abs));
            if (kind && nameMatches(d.name)) out.push({ abs, message: `cannot read it as a design file: it is ${kind}` });
          } catch {
            /* gone meanwhile */
          }
        }
      } else if (!d.isFile()) {
        const kind = specialKind(d);
        if (kind && nameMatches(d.name)) out.push({ abs, message: `cannot read it as a design file: it is ${kind}` });
      }
    }
  }
  return out;
}

/** The folder a glob starts from: its leading segments without glob characters. */
function globBase(pattern: string, cwd: string): string {
  const segs = pattern.split('/');
  const fixed: string[] = [];
  for (const s of segs.slice(0, -1)) {
    if (GLOB_CHARS.test(s)) break;
    fixed.push(s);
  }
  return path.resolve(cwd, fixed.join('/') || '.');
}

/** A test of a file name against the last segment of a glob (`*`, `?`, `{a,b}`, `[...]`). */
function lastSegmentMatcher(pattern: string): (name: string) => boolean {
  const last = pattern.split('/').pop() ?? '';
  let re = '';
  for (let i = 0; i < last.length; i++) {
    const ch = last[i];
    if (ch === '*') re += '[^/]*';
    else if (ch === '?') re += '[^/]';
    else if (ch === '{') re += '(?:';
    else if (ch === '}') re += ')';
    else if (ch === ',') re += '|';
    else if (ch === '[' || ch === ']') re += ch;
    else re += ch.replace(/[.+^$()|\\]/g, '\\$&');
  }
  try {
    const rx = new RegExp(`^${re}$`);
    return (name) => rx.test(name);
  } catch {
    return (name) => name.endsWith(DESIGN_SUFFIX) || name.endsWith(JSON_DESIGN_SUFFIX);
  }
}

async function globIn(patterns: string[], cwd: string, unreadable: Unreadable[]): Promise<string[]> {
  // tinyglobby is loaded only when a folder or glob has to be walked.
  const { globSync } = await import('tinyglobby');
  const found = globSync(patterns, { cwd, absolute: true, onlyFiles: true, ignore: IGNORED, dot: false });
  for (const p of patterns) {
    if (p.startsWith('!')) continue;
    unreadable.push(...walkProblems(globBase(p, cwd), lastSegmentMatcher(p)));
  }
  return found.map((f) => path.resolve(f)).sort();
}

/** Expands command-line paths relative to cwd. Explicit files are taken whatever their suffix. */
export async function expandPaths(paths: string[], cwd: string): Promise<Expansion> {
  const files: string[] = [];
  const problems: string[] = [];
  const unreadable: Unreadable[] = [];
  for (const p of paths) {
    const abs = path.resolve(cwd, p);
    let kind: 'file' | 'dir' | 'unreadable' | null = null;
    try {
      const s = statSync(abs);
      kind = s.isDirectory() ? 'dir' : 'file';
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      // A link named on the command line that leads nowhere is unreadable, not absent.
      let link = false;
      try {
        link = lstatSync(abs).isSymbolicLink();
      } catch {
        /* not there at all */
      }
      if (link || code === 'ELOOP' || code === 'EACCES') {
        kind = 'unreadable';
        unreadable.push({ abs, message: linkProblem(abs) ?? `cannot read it (${code})` });
      }
    }
    if (kind === 'file') files.push(abs);
    else if (kind === 'unreadable') continue;
    else if (kind === 'dir') {
      const before = unreadable.length;
      const found = await globIn(['**/*.fold.{yaml,json}'], abs, unreadable);
      if (found.length === 0 && unreadable.length === before) problems.push(`no *${DESIGN_SUFFIX} or *${JSON_DESIGN_SUFFIX} files in folder ${p}`);
      files.push(...found);
    } else if (GLOB_CHARS.test(p)) {
      const before = unreadable.length;
      const found = await globIn([toPosix(p)], cwd, unreadable);
      if (found.length === 0 && unreadable.length === before) problems.push(`no files match ${p}`);
      files.push(...found);
    } else {
      problems.push(`no such file or folder: ${p}`);
    }
  }
  return { files: unique(files), problems, unreadable: uniqueUnreadable(unreadable) };
}

/** Expands the config's `designs` globs, relative to the config file's folder. */
export async function expandGlobs(globs: string[], dir: string): Promise<{ files: string[]; unreadable: Unreadable[] }> {
  const unreadable: Unreadable[] = [];
  const files = unique(await globIn(globs.map(toPosix), dir, unreadable));
  return { files, unreadable: uniqueUnreadable(unreadable) };
}

/**
 * Each file once: two paths to one file (a link to a parent folder walks the same files again)
 * are one design, kept under the path met first, so it is not checked twice or called a duplicate.
 */
function unique(files: string[]): string[] {
  const seen = new Set<string>();
  const out: string[] = [];
  for (const f of files) {
    let key = f;
    try {
      key = realpathSync(f);
    } catch {
      /* checked, and reported, when read */
    }
    if (!seen.has(key)) {
      seen.add(key);
      out.push(f);
    }
  }
  return out;
}

function uniqueUnreadable(list: Unreadable[]): Unreadable[] {
  const seen = new Set<string>();
  return list.filter((u) => (seen.has(u.abs) ? false : (seen.add(u.abs), true))).sort((a, b) => (a.abs < b.abs ? -1 : a.abs > b.abs ? 1 : 0));
}

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

/** A path as the report names it: relative to the root, forward slashes. */
export function reportPath(abs: string, root: string): string {
  const rel = path.relative(root, abs);
  return toPosix(rel === '' ? path.basename(abs) : rel);
}
