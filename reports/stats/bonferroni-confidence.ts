// bonferroniConfidence: the per-comparison confidence level that keeps the family of
// `comparisons` intervals simultaneously at `confidence` or better, by the Bonferroni
// inequality (Dunn, "Multiple comparisons among means", JASA 56, 1961; Law,
// Simulation Modeling and Analysis, 5th ed., §10.3): 1 - (1 - confidence) / comparisons.
//
// Complexity: O(1).
// Bad input: throws RangeError unless 0 < confidence < 1 and comparisons is a
// positive integer. One comparison returns confidence unchanged.
import { checkConfidence } from './check-confidence.ts';

export function bonferroniConfidence(confidence: number, comparisons: number): number {
  checkConfidence(confidence, 'bonferroniConfidence');
  if (!Number.isInteger(comparisons) || comparisons < 1) {
    throw new RangeError(`bonferroniConfidence: comparisons must be a positive integer, got ${comparisons}`);
  }
  return 1 - (1 - confidence) / comparisons;
}
