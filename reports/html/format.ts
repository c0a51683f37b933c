/** Number formats of the HTML pages: fixed decimals, intervals as `mean ± half-width`, shares in percent. */

export interface IntervalLike {
  mean: number | null;
  halfWidth: number | null;
  low?: number | null;
  high?: number | null;
  n?: number;
}

const dash = '–';

export function fixed(value: number | null | undefined, digits: number): string {
  return typeof value === 'number' && Number.isFinite(value) ? value.toFixed(digits) : dash;
}

export function percent(value: number | null | undefined, digits = 1): string {
  return typeof value === 'number' && Number.isFinite(value) ? `${(value * 100).toFixed(digits)}%` : dash;
}

/**
 * `412.3 ± 9.1`; an interval whose ends were clipped to the figure's range (a share cannot
 * pass 0 or 1, a count cannot go below 0) as `10.0 (0.0–37.4)`, its ends written out, so a
 * reader never sees a half-width that reaches past what the figure can take; the mean alone
 * when no honest interval exists.
 */
export function intervalText(interval: IntervalLike | null | undefined, digits: number, scale = 1): string {
  if (!interval || interval.mean === null || !Number.isFinite(interval.mean)) return dash;
  const mean = (interval.mean * scale).toFixed(digits);
  const halfWidth = interval.halfWidth;
  if (halfWidth === null || !Number.isFinite(halfWidth)) return `${mean} (no interval)`;
  const { low, high } = interval;
  const tolerance = 1e-9 * Math.max(1, Math.abs(interval.mean), Math.abs(halfWidth));
  const clipped =
    typeof low === 'number' && typeof high === 'number' && (Math.abs(low - (interval.mean - halfWidth)) > tolerance || Math.abs(high - (interval.mean + halfWidth)) > tolerance);
  return clipped ? `${mean} (${(low! * scale).toFixed(digits)}–${(high! * scale).toFixed(digits)})` : `${mean} ± ${(halfWidth * scale).toFixed(digits)}`;
}

/** Seconds as `1 h 30 min`, `12 min`, `45 s` for headings. */
export function duration(seconds: number): string {
  if (seconds >= 3600) {
    const h = Math.floor(seconds / 3600);
    const m = Math.round((seconds - h * 3600) / 60);
    return m > 0 ? `${h} h ${m} min` : `${h} h`;
  }
  if (seconds >= 60) return `${Math.round(seconds / 60)} min`;
  return `${Math.round(seconds)} s`;
}
