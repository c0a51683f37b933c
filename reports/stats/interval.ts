// Interval: a two-sided confidence interval around a mean (or a difference of means).
// halfWidth, low and high are null when there is too little data to estimate a
// variance (a single observation). n is the number of observations (or pairs) used;
// for welchInterval it is the total count of both samples.
export type Interval = {
  mean: number;
  halfWidth: number | null;
  low: number | null;
  high: number | null;
  n: number;
};
