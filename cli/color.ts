// Decides whether output is coloured, and hands out a chalk instance at that level.
import { Chalk, type ChalkInstance } from 'chalk';

export type ColorLevel = 0 | 1 | 2 | 3;

/**
 * --no-color wins; then FORCE_COLOR (as Node itself treats it: it overrides NO_COLOR);
 * then NO_COLOR (any non-empty value); otherwise colour only on a terminal.
 */
export function colorLevel(opts: { flag: boolean; isTTY: boolean; env: NodeJS.ProcessEnv }): ColorLevel {
  if (!opts.flag) return 0;
  const force = opts.env.FORCE_COLOR;
  if (force !== undefined) {
    if (force === '' || force === 'true') return 1;
    if (force === 'false') return 0;
    const n = Number.parseInt(force, 10);
    if (Number.isFinite(n)) return Math.max(0, Math.min(3, n)) as ColorLevel;
    return 1;
  }
  if (opts.env.NO_COLOR !== undefined && opts.env.NO_COLOR !== '') return 0;
  if (!opts.isTTY) return 0;
  if (opts.env.TERM === 'dumb') return 0;
  const term = opts.env.COLORTERM;
  if (term === 'truecolor' || term === '24bit') return 3;
  if (opts.env.TERM && /-256(color)?$/i.test(opts.env.TERM)) return 2;
  return 1;
}

export function makeChalk(level: ColorLevel): ChalkInstance {
  return new Chalk({ level });
}
