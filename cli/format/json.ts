// The machine-readable report (format pleat-report/1), as documented in docs/cli.md.
import type { Report } from '../../shared/types';
import type { FormatContext } from './common';
import { escapeJsonText } from './escape';

/** Reports up to this size are indented for people who open them; larger ones stay compact. */
const INDENT_BELOW_CHARS = 1_000_000;

export function formatJson(report: Report, _ctx: FormatContext = {}): string {
  const compact = JSON.stringify(report);
  // Same data; only characters JSON.stringify leaves raw (U+2028, bidi controls...) become \u escapes.
  return `${escapeJsonText(compact.length < INDENT_BELOW_CHARS ? JSON.stringify(report, null, 2) : compact)}\n`;
}
