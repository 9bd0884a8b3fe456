// Method: after a YAML syntax error, finds the flow collection (`{`, `[`) or quoted scalar that is
// still open where the parser stopped, by a small scan of the text up to that point.
// Why not the `yaml` package's lexer: a static import would load it at every CLI start, and
// this runs only on the error path. The scan knows comments, quoted scalars and block scalars,
// which is what can hide a bracket in a design file.
// Convention: lines and columns are 1-based, columns count UTF-16 code units (as shared/design/positions.ts).

export interface OpenConstruct {
  /** The character that opened it: `{`, `[`, `"` or `'`. */
  char: string;
  line: number;
  column: number;
}

/** Characters after which (on the same line, spaces skipped) a flow collection or quoted scalar may begin. */
const STARTS = new Set([':', '-', '[', '{', ',', '?']);

/**
 * The innermost construct opened before `end` (an offset) that is never closed in the whole
 * text, or null. One still open at `end` but closed later (the error is inside it) is not named.
 */
export function openConstructBefore(text: string, end: number): OpenConstruct | null {
  const atEnd = new Set(openOffsets(text, text.length));
  const here = openOffsets(text, end);
  for (let k = here.length - 1; k >= 0; k--) if (atEnd.has(here[k]!)) return at(text, here[k]!);
  return null;
}

/** Offsets of the constructs still open at `end`, outermost first. */
function openOffsets(text: string, end: number): number[] {
  const stack: number[] = [];
  let lineStart = 0;
  let blockIndent = -1; // inside a block scalar: the indentation of the line that opened it
  const stop = Math.min(end, text.length);
  let i = 0;
  const atValueStart = (k: number): boolean => {
    let j = k - 1;
    while (j >= lineStart && (text[j] === ' ' || text[j] === '\t')) j--;
    return j < lineStart || STARTS.has(text[j]!);
  };
  while (i < stop) {
    if (i === lineStart && blockIndent >= 0) {
      // Lines of a block scalar are text: skip those indented deeper than its opening line (or blank).
      let j = i;
      while (j < text.length && text[j] === ' ') j++;
      const blank = j >= text.length || text[j] === '\n' || text[j] === '\r';
      if (blank || j - i > blockIndent) {
        const nl = text.indexOf('\n', i);
        if (nl < 0 || nl >= stop) return stack;
        i = lineStart = nl + 1;
        continue;
      }
      blockIndent = -1;
    }
    const c = text[i]!;
    if (c === '\n') {
      i = lineStart = i + 1;
      continue;
    }
    if (c === '#' && (i === lineStart || /\s/.test(text[i - 1]!))) {
      const nl = text.indexOf('\n', i);
      i = nl < 0 ? stop : nl;
      continue;
    }
    if ((c === '"' || c === "'") && atValueStart(i)) {
      let j = i + 1;
      for (; j < stop; j++) {
        if (c === '"' && text[j] === '\\') j++;
        else if (text[j] === c) {
          if (c === "'" && text[j + 1] === "'") j++;
          else break;
        }
      }
      if (j >= stop) return [...stack, i];
      // A quoted scalar may run over lines: keep lineStart on the line where it ends.
      const nl = text.lastIndexOf('\n', j);
      if (nl >= lineStart) lineStart = nl + 1;
      i = j + 1;
      continue;
    }
    if ((c === '{' || c === '[') && (stack.length > 0 || atValueStart(i))) stack.push(i);
    else if ((c === '}' || c === ']') && stack.length && text[stack[stack.length - 1]!] === (c === '}' ? '{' : '[')) stack.pop();
    else if ((c === '|' || c === '>') && stack.length === 0 && atValueStart(i) && /^[|>][-+0-9]*[ \t]*(#.*)?\r?$/.test(text.slice(i, lineEnd(text, i)))) {
      let indent = 0;
      while (text[lineStart + indent] === ' ') indent++;
      blockIndent = indent;
    }
    i++;
  }
  return stack;
}

function lineEnd(text: string, i: number): number {
  const nl = text.indexOf('\n', i);
  return nl < 0 ? text.length : nl;
}

function at(text: string, offset: number): OpenConstruct {
  let line = 1;
  let start = 0;
  for (let k = text.indexOf('\n'); k >= 0 && k < offset; k = text.indexOf('\n', k + 1)) {
    line++;
    start = k + 1;
  }
  return { char: text[offset]!, line, column: offset - start + 1 };
}

/** The offset of a 1-based line and column in `text`. */
export function offsetOf(text: string, line: number, column: number): number {
  let start = 0;
  for (let l = 1; l < line; l++) {
    const nl = text.indexOf('\n', start);
    if (nl < 0) return text.length;
    start = nl + 1;
  }
  return Math.min(text.length, start + column - 1);
}
