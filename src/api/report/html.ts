/** HTML text helpers of the report page: escaping and number formatting (rounding only). */

const ESCAPES: Record<string, string> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Escape text for HTML element content and quoted attribute values (also safe inside SVG). */
export function esc(value: unknown): string {
  return String(value).replace(/[&<>"']/g, (c) => ESCAPES[c]);
}

/**
 * A number for reading: rounded by magnitude (≥ 1000: whole with separators; ≥ 100: one
 * decimal; ≥ 1: two; else three significant digits), with a true minus sign. Rounding only:
 * the value itself is the service's.
 */
export function num(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return 'n/a';
  const a = Math.abs(x);
  let s: string;
  if (a === 0) s = '0';
  else if (a >= 1000) s = Math.round(a).toLocaleString('en-US');
  else if (a >= 100) s = a.toFixed(1);
  else if (a >= 1) s = a.toFixed(2);
  else s = Number(a.toPrecision(3)).toString();
  return x < 0 && s !== '0' ? `\u2212${s}` : s;
}

/** A probability or share as a percentage. */
export function pct(x: number | null | undefined): string {
  if (x === null || x === undefined || !Number.isFinite(x)) return 'n/a';
  return `${Math.round(x * 1000) / 10}%`;
}

/** "estimate [lower, upper]". */
export function interval(e: { estimate: number; lower: number; upper: number }): string {
  return `${num(e.estimate)} [${num(e.lower)}, ${num(e.upper)}]`;
}
