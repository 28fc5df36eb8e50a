/**
 * Short, printable excerpts of file content for messages. A message never echoes more than a short piece of a line
 * (a file named as data by mistake may hold secrets or terminal control sequences): control characters, DEL and
 * the replacement character of undecodable bytes are shown as \xNN / \uFFFD escapes, and the text is cut to `max`
 * characters with an ellipsis.
 */

/** Longest excerpt in a terminal message, characters. */
export const EXCERPT_CHARS = 60;

/** `text` made printable and cut to `max` characters (an ellipsis marks a cut), in double quotes. */
export function excerpt(text: string, max = EXCERPT_CHARS): string {
  return `"${printable(text, max).replace(/"/g, '\\"')}"`;
}

/** `text` made printable and cut to `max` characters, not quoted. */
export function printable(text: string, max = EXCERPT_CHARS): string {
  let out = '';
  let n = 0;
  for (const ch of text) {
    if (n >= max) return out + '\u2026';
    const c = ch.codePointAt(0)!;
    if (c < 0x20 || (c >= 0x7f && c < 0xa0)) out += `\\x${c.toString(16).padStart(2, '0')}`;
    else if (c === 0xfffd) out += '\\uFFFD';
    else out += ch;
    n++;
  }
  return out;
}
