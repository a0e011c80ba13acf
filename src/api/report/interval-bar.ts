/**
 * Interval bars: one small inline SVG per estimate on a scale shared by its table, with the
 * interval as a line with end caps, the estimate as a dot, the cross-check as a hollow
 * diamond, and a dashed line at zero. The numbers are always printed beside the bar as text
 * and in the SVG's aria-label, so the bar never carries meaning alone.
 */
import { esc, interval, num } from './html.js';

/** A shared axis: the smallest range holding every value and zero, with a little room. */
export interface Scale {
  min: number;
  max: number;
}

/** The scale that holds all `values` (non-finite ones ignored) and 0. */
export function scaleFor(values: readonly number[]): Scale {
  let lo = 0;
  let hi = 0;
  for (const v of values) {
    if (!Number.isFinite(v)) continue;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (lo === hi) return { min: lo - 1, max: hi + 1 };
  const pad = (hi - lo) * 0.06;
  return { min: lo - pad, max: hi + pad };
}

const BAR_W = 220;
const BAR_H = 26;

/** One interval bar. `crossCheck` (if finite) is drawn as a diamond. */
export function intervalBar(e: { estimate: number; lower: number; upper: number }, scale: Scale, crossCheck: number | null, what: string): string {
  const x = (v: number) => 6 + ((v - scale.min) / (scale.max - scale.min)) * (BAR_W - 12);
  const clamp = (v: number) => Math.min(BAR_W - 6, Math.max(6, x(v)));
  const y = BAR_H / 2;
  const label = `${what}: ${interval(e)}${crossCheck !== null && Number.isFinite(crossCheck) ? `; cross-check ${num(crossCheck)}` : ''}`;
  const parts = [
    `<svg class="bar" role="img" aria-label="${esc(label)}" viewBox="0 0 ${BAR_W} ${BAR_H}" width="${BAR_W}" height="${BAR_H}" xmlns="http://www.w3.org/2000/svg">`,
    `<title>${esc(label)}</title>`,
    `<line class="axis" x1="6" x2="${BAR_W - 6}" y1="${BAR_H - 3}" y2="${BAR_H - 3}"/>`,
  ];
  if (scale.min <= 0 && scale.max >= 0) parts.push(`<line class="zero" x1="${x(0).toFixed(1)}" x2="${x(0).toFixed(1)}" y1="1" y2="${BAR_H - 1}"/>`);
  const l = clamp(e.lower);
  const u = clamp(e.upper);
  parts.push(
    `<line class="ci" x1="${l.toFixed(1)}" x2="${u.toFixed(1)}" y1="${y}" y2="${y}"/>`,
    `<line class="cap" x1="${l.toFixed(1)}" x2="${l.toFixed(1)}" y1="${y - 6}" y2="${y + 6}"/>`,
    `<line class="cap" x1="${u.toFixed(1)}" x2="${u.toFixed(1)}" y1="${y - 6}" y2="${y + 6}"/>`,
    `<circle class="est" cx="${clamp(e.estimate).toFixed(1)}" cy="${y}" r="4.5"/>`,
  );
  if (crossCheck !== null && Number.isFinite(crossCheck)) {
    const c = clamp(crossCheck);
    parts.push(`<path class="xc" d="M${c.toFixed(1)},${y - 6} L${(c + 5).toFixed(1)},${y} L${c.toFixed(1)},${y + 6} L${(c - 5).toFixed(1)},${y} z"/>`);
  }
  parts.push('</svg>');
  return parts.join('');
}

/** The legend that explains the bar's marks, in words. */
export function barLegend(): string {
  return (
    '<p class="legend">' +
    '<svg width="150" height="16" viewBox="0 0 150 16" aria-hidden="true" xmlns="http://www.w3.org/2000/svg"><line class="ci" x1="4" x2="40" y1="8" y2="8"/><line class="cap" x1="4" x2="4" y1="3" y2="13"/><line class="cap" x1="40" x2="40" y1="3" y2="13"/><circle class="est" cx="22" cy="8" r="4"/><path class="xc" d="M90,2 L96,8 L90,14 L84,8 z"/><line class="zero" x1="130" x2="130" y1="1" y2="15"/></svg> ' +
    'line with caps: interval; dot: estimate; hollow diamond: AIPW cross-check; dashed vertical line: zero.</p>'
  );
}
