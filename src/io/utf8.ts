/**
 * UTF-8 validation with the place of the first fault, for text files that must be UTF-8 (the campaign file): a
 * decoder that silently replaces bad bytes would let a Latin-1 "°" or "ü" turn into U+FFFD inside a key or a path.
 * Follows the well-formed byte sequences of The Unicode Standard, Table 3-7 (no overlongs, no surrogates, at most
 * U+10FFFF).
 */

/** Byte offset of the first byte that does not start or continue a well-formed UTF-8 sequence; -1 when all are. */
export function firstInvalidUtf8(b: Uint8Array): number {
  let i = 0;
  const n = b.length;
  while (i < n) {
    const c = b[i];
    if (c < 0x80) { i++; continue; }
    let need: number, lo = 0x80, hi = 0xbf;
    if (c >= 0xc2 && c <= 0xdf) need = 1;
    else if (c >= 0xe0 && c <= 0xef) { need = 2; if (c === 0xe0) lo = 0xa0; else if (c === 0xed) hi = 0x9f; }
    else if (c >= 0xf0 && c <= 0xf4) { need = 3; if (c === 0xf0) lo = 0x90; else if (c === 0xf4) hi = 0x8f; }
    else return i;
    for (let k = 1; k <= need; k++) {
      const d = b[i + k];
      if (i + k >= n) return i;
      if (k === 1 ? d < lo || d > hi : d < 0x80 || d > 0xbf) return i;
    }
    i += need + 1;
  }
  return -1;
}

/** 1-based line and column (in characters) of byte `offset` of a UTF-8 buffer whose bytes before it are valid. */
export function linePosOfByte(b: Uint8Array, offset: number): { line: number; col: number } {
  let line = 1, lineStart = 0;
  for (let i = 0; i < offset; i++) if (b[i] === 10) { line++; lineStart = i + 1; }
  const col = new TextDecoder().decode(b.subarray(lineStart, offset)).length + 1;
  return { line, col };
}
