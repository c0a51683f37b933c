// checkConfidence: validates a two-sided confidence level (e.g. 0.95) shared by the
// interval functions. Complexity O(1). Throws RangeError unless 0 < confidence < 1.
export function checkConfidence(confidence: number, caller: string): void {
  if (!(confidence > 0 && confidence < 1)) {
    throw new RangeError(`${caller}: confidence must be strictly between 0 and 1, got ${confidence}`);
  }
}
