/** Minimal SVG/XML writing: escaping and compact number formatting. */

const ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&apos;' };

/** Text or attribute value made safe for XML (also drops characters XML 1.0 forbids). */
export function escapeXml(s: string): string {
  return s
    .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, '')
    .replace(/[&<>"']/g, (ch) => ESCAPES[ch]!);
}

/** Coordinate with at most two decimals, no trailing zeros. */
export function fmt(x: number): string {
  const r = Math.round(x * 100) / 100;
  return Object.is(r, -0) ? '0' : String(r);
}

/** `name="value"` pairs from an object; undefined values are skipped; all values escaped. */
export function attrs(a: Record<string, string | number | undefined>): string {
  let out = '';
  for (const [k, v] of Object.entries(a)) {
    if (v === undefined) continue;
    out += ` ${k}="${escapeXml(typeof v === 'number' ? fmt(v) : v)}"`;
  }
  return out;
}

/** An element with escaped text content. */
export function textEl(a: Record<string, string | number | undefined>, text: string): string {
  return `<text${attrs(a)}>${escapeXml(text)}</text>`;
}
