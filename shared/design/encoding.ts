// Method: strict UTF-8 decoding (WHATWG Encoding, TextDecoder with fatal: true) of a design
// file's bytes, with the byte-order marks of UTF-8, UTF-16 and UTF-32 recognised and named.
// Convention: never throws; a problem is one `file-encoding` diagnostic with line and column.
import type { Diagnostic } from '../types';

export type Decoded = { text: string; diagnostic: null } | { text: null; diagnostic: Diagnostic };

function problem(message: string, line = 1, column = 1): Decoded {
  return { text: null, diagnostic: { severity: 'error', code: 'file-encoding', message, line, column } };
}

const RESAVE = 'design files are UTF-8: save it as UTF-8 (without the byte-order mark, or with the UTF-8 one)';

/** Length of the valid UTF-8 sequence at i, or 0 when the bytes there are not UTF-8 (RFC 3629). */
function sequenceLength(b: Uint8Array, i: number): number {
  const c = b[i];
  if (c < 0x80) return 1;
  const cont = (k: number) => i + k < b.length && (b[i + k] & 0xc0) === 0x80;
  if (c >= 0xc2 && c <= 0xdf) return cont(1) ? 2 : 0;
  if (c >= 0xe0 && c <= 0xef) {
    if (!cont(1) || !cont(2)) return 0;
    const d = b[i + 1];
    if (c === 0xe0 && d < 0xa0) return 0; // overlong
    if (c === 0xed && d > 0x9f) return 0; // a surrogate code point
    return 3;
  }
  if (c >= 0xf0 && c <= 0xf4) {
    if (!cont(1) || !cont(2) || !cont(3)) return 0;
    const d = b[i + 1];
    if (c === 0xf0 && d < 0x90) return 0;
    if (c === 0xf4 && d > 0x8f) return 0; // past U+10FFFF
    return 4;
  }
  return 0;
}

/** Line and column (UTF-16 units, as the rest of Pleat counts) of byte offset `at`. */
function position(bytes: Uint8Array, at: number): [number, number] {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < at; i++) if (bytes[i] === 0x0a) {
    line++;
    lineStart = i + 1;
  }
  const before = new TextDecoder('utf-8').decode(bytes.subarray(lineStart, at));
  return [line, before.length + 1];
}

/**
 * The text of a design file from its bytes. Invalid UTF-8 is refused at the first bad byte
 * instead of being replaced (a replaced byte could turn an id into another one and pass), and
 * UTF-16 or UTF-32 files are named as such instead of failing on their zero bytes.
 */
export function decodeDesignBytes(bytes: Uint8Array): Decoded {
  const b = bytes;
  if (b.length >= 4 && b[0] === 0xff && b[1] === 0xfe && b[2] === 0 && b[3] === 0) return problem(`the file is UTF-32 (little-endian; it starts with the byte-order mark FF FE 00 00); ${RESAVE}`);
  if (b.length >= 4 && b[0] === 0 && b[1] === 0 && b[2] === 0xfe && b[3] === 0xff) return problem(`the file is UTF-32 (big-endian; it starts with the byte-order mark 00 00 FE FF); ${RESAVE}`);
  if (b.length >= 2 && b[0] === 0xff && b[1] === 0xfe) return problem(`the file is UTF-16 (little-endian; it starts with the byte-order mark FF FE); ${RESAVE}`);
  if (b.length >= 2 && b[0] === 0xfe && b[1] === 0xff) return problem(`the file is UTF-16 (big-endian; it starts with the byte-order mark FE FF); ${RESAVE}`);
  // UTF-16 without a mark: ASCII text with a zero byte beside every character.
  if (b.length >= 4) {
    const le = b[0] !== 0 && b[1] === 0 && b[2] !== 0 && b[3] === 0;
    const be = b[0] === 0 && b[1] !== 0 && b[2] === 0 && b[3] !== 0;
    if (le || be) return problem(`the file looks like UTF-16 (${le ? 'little' : 'big'}-endian, no byte-order mark: a zero byte beside every character); ${RESAVE}`);
  }
  try {
    return { text: new TextDecoder('utf-8', { fatal: true }).decode(b), diagnostic: null };
  } catch {
    let i = 0;
    while (i < b.length) {
      const n = sequenceLength(b, i);
      if (n === 0) break;
      i += n;
    }
    const [line, column] = position(b, i);
    const shown = Array.from(b.subarray(i, Math.min(b.length, i + 4)), (x) => x.toString(16).toUpperCase().padStart(2, '0')).join(' ');
    return problem(`the file is not valid UTF-8: byte ${i} (${shown}${i + 4 < b.length ? ' ...' : ''}) starts no UTF-8 character; ${RESAVE}`, line, column);
  }
}

/** A byte count as people read it, exact: `16,777,217 bytes (16.0 MiB)`. */
export function formatBytes(n: number): string {
  const exact = `${n.toLocaleString('en-US')} byte${n === 1 ? '' : 's'}`;
  return n >= 1024 * 1024 ? `${exact} (${(n / (1024 * 1024)).toFixed(1)} MiB)` : exact;
}
