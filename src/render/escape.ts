/**
 * Escaping for SVG and HTML text and attribute values. Every string that came from a campaign file, a manifest or a
 * data file passes through here before it is written into markup.
 */
const ENTITIES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escapes &, <, >, " and ' so the text is safe both as element content and inside a quoted attribute. */
export function esc(text: unknown): string {
  return String(text ?? '').replace(/[&<>"']/g, (c) => ENTITIES[c]);
}
