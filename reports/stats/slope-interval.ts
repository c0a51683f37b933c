// slopeInterval: the least-squares slope of y on x with its Student-t confidence interval
// (simple linear regression; e.g. Draper & Smith, Applied Regression Analysis, 3rd ed.,
// §1.4; Montgomery & Runger, Applied Statistics and Probability for Engineers, §11-5):
//   b = Sxy / Sxx,  s^2 = SSE / (n - 2),  se(b) = s / sqrt(Sxx),  b ± t(1 - alpha/2, n - 2) se(b).
// The residuals are assumed independent: feed it batch means, not raw correlated samples
// (see batchedSlopeInterval). Checked against the NIST StRD "Norris" certified values.
//
// Complexity: O(n).
// Too little data: fewer than 2 points, or all x equal, throws RangeError; exactly 2 points
// give the slope with halfWidth/low/high null (no residual degrees of freedom).
import { checkConfidence } from './check-confidence.ts';
import { tQuantile } from './t-quantile.ts';

export interface SlopeInterval {
  slope: number;
  intercept: number;
  /** Standard error of the slope, or null with fewer than 3 points. */
  standardError: number | null;
  degreesOfFreedom: number;
  halfWidth: number | null;
  low: number | null;
  high: number | null;
  n: number;
  /** y minus the fitted line, in input order. */
  residuals: number[];
}

export function slopeInterval(x: readonly number[], y: readonly number[], confidence: number): SlopeInterval {
  checkConfidence(confidence, 'slopeInterval');
  const n = x.length;
  if (n !== y.length) throw new RangeError(`slopeInterval: x and y must have the same length, got ${n} and ${y.length}`);
  if (n < 2) throw new RangeError(`slopeInterval: need at least 2 points, got ${n}`);
  let sumX = 0;
  let sumY = 0;
  for (let i = 0; i < n; i += 1) {
    sumX += x[i];
    sumY += y[i];
  }
  const meanX = sumX / n;
  const meanY = sumY / n;
  let sxx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i += 1) {
    const dx = x[i] - meanX;
    sxx += dx * dx;
    sxy += dx * (y[i] - meanY);
  }
  if (!(sxx > 0)) throw new RangeError('slopeInterval: all x values are equal, the slope is undefined');
  const slope = sxy / sxx;
  const intercept = meanY - slope * meanX;
  const residuals = new Array<number>(n);
  let sse = 0;
  for (let i = 0; i < n; i += 1) {
    residuals[i] = y[i] - (intercept + slope * x[i]);
    sse += residuals[i] * residuals[i];
  }
  const degreesOfFreedom = n - 2;
  if (degreesOfFreedom < 1) {
    return { slope, intercept, standardError: null, degreesOfFreedom, halfWidth: null, low: null, high: null, n, residuals };
  }
  const standardError = Math.sqrt(sse / degreesOfFreedom / sxx);
  const halfWidth = tQuantile(1 - (1 - confidence) / 2, degreesOfFreedom) * standardError;
  return { slope, intercept, standardError, degreesOfFreedom, halfWidth, low: slope - halfWidth, high: slope + halfWidth, n, residuals };
}
