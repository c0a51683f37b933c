/**
 * `lead-times.csv`: the distribution of lead time (release to delivery) of the tasks
 * delivered after the warm-up cut, pooled over replications, as counts in bins of equal
 * width. Bin edges are d3-array's "nice" thresholds (steps of 1, 2 or 5 times a power of
 * ten, about 30 bins), so that the report's histogram reads in round seconds.
 */
import { bin } from 'd3-array';
import { stringify } from 'csv-stringify/sync';
import type { ReplicationRecord } from '../sim/engine.ts';

export interface LeadTimeBin {
  fromSeconds: number;
  toSeconds: number;
  tasks: number;
}

/** Lead times in seconds of the tasks each record delivered from interval `cutIntervals` on. */
export function leadTimesAfterWarmup(records: ReplicationRecord[], cutIntervals: number): number[] {
  const values: number[] = [];
  for (const record of records) {
    const m = record.metrics;
    // Lead times are stored in delivery order; the per-interval delivery counts say where the cut falls.
    let before = 0;
    for (let i = 0; i < Math.min(cutIntervals, m.intervalCount); i++) before += m.deliveries[i];
    const leads = m.leadTicks;
    for (let i = before; i < leads.length; i++) values.push(leads[i] * record.tickSeconds);
  }
  return values;
}

export function leadTimeHistogram(leadSeconds: number[], bins = 30): LeadTimeBin[] {
  if (leadSeconds.length === 0) return [];
  const longest = leadSeconds.reduce((m, v) => (v > m ? v : m), 0);
  // The top bin of d3's bin() includes its upper edge, so the longest lead time is counted.
  const histogram = bin().domain([0, longest]).thresholds(bins);
  return histogram(leadSeconds)
    .map((b) => ({ fromSeconds: b.x0 ?? 0, toSeconds: b.x1 ?? 0, tasks: b.length }))
    .filter((b) => b.toSeconds > b.fromSeconds);
}

export function leadTimesCsv(blocks: { policy?: string; bins: LeadTimeBin[] }[]): string {
  const withPolicy = blocks.some((b) => b.policy !== undefined);
  const rows = blocks.flatMap((b) => b.bins.map((r) => (withPolicy ? { policy: b.policy ?? '', ...r } : { ...r })));
  const columns = withPolicy ? ['policy', 'fromSeconds', 'toSeconds', 'tasks'] : ['fromSeconds', 'toSeconds', 'tasks'];
  return stringify(rows, { header: true, columns });
}
