// Method: design files written as JSON (RFC 8259) are read by JSON.parse, several times faster than
// a YAML loader; on a syntax error a small scanner finds where the text stops being JSON, since
// the engine's message of JSON.parse does not always carry a position.
// Convention: offsets are UTF-16 indices into the text.

/** True when the text, after leading white space, opens a JSON object: the only top level a design has. */
export function looksLikeJson(text: string): boolean {
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09) continue;
    return c === 0x7b; // {
  }
  return false;
}

/** The first character that makes the text invalid JSON (the end of the text if it stops early) and what was expected there; null for valid JSON. */
export function jsonErrorOffset(text: string): { offset: number; expected: string } | null {
  let i = 0;
  const n = text.length;
  let fail = null as { offset: number; expected: string } | null;
  const ws = () => {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09) i++;
      else break;
    }
  };
  const stop = (expected: string): false => {
    fail = { offset: i, expected };
    return false;
  };
  const string = (): boolean => {
    i++; // the opening quote
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 0x22) {
        i++;
        return true;
      }
      if (c < 0x20) return stop('a closing `"` before the end of the line (control characters must be escaped)');
      if (c === 0x5c) {
        const e = text[i + 1];
        if (e === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
            i += 2;
            return stop('four hexadecimal digits after `\\u`');
          }
          i += 6;
        } else if (e !== undefined && '"\\/bfnrt'.includes(e)) i += 2;
        else {
          i++;
          return stop('an escape (\\" \\\\ \\/ \\b \\f \\n \\r \\t \\uXXXX)');
        }
      } else i++;
    }
    return stop('a closing `"`');
  };
  const NUMBER = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;
  const value = (depth: number): boolean => {
    ws();
    if (i >= n) return stop('a value');
    const c = text[i];
    if (c === '{' || c === '[') {
      if (depth > 100) return stop('less nesting');
      const close = c === '{' ? '}' : ']';
      i++;
      ws();
      if (text[i] === close) {
        i++;
        return true;
      }
      for (;;) {
        if (c === '{') {
          ws();
          if (text[i] !== '"') return stop('a property name in double quotes');
          if (!string()) return false;
          ws();
          if (text[i] !== ':') return stop('`:` after the property name');
          i++;
        }
        if (!value(depth + 1)) return false;
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === close) {
          i++;
          return true;
        }
        return stop(`\`,\` or \`${close}\``);
      }
    }
    if (c === '"') return string();
    for (const word of ['true', 'false', 'null']) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return true;
      }
    }
    NUMBER.lastIndex = i;
    const m = NUMBER.exec(text);
    if (m && m[0].length > 0) {
      i += m[0].length;
      return true;
    }
    return stop('a value (object, array, string, number, true, false or null)');
  };
  if (!value(0)) return fail;
  ws();
  if (i < n) {
    stop('the end of the text after the top-level object');
    return fail;
  }
  return null;
}
