/** Terminal rendering of a policy comparison: one block per policy, then the paired differences. */
import type { Comparison } from './compare.ts';
import { describeStability, describeWarmup, intervalRow, renderColumns } from './console-table.ts';
import { safetyNote } from './safety.ts';

const metricLabels: Record<string, { label: string; unit: 'rate' | 'seconds' | 'percent' | 'count' }> = {
  throughputPerHour: { label: 'throughput (tasks/h)', unit: 'rate' },
  leadTimeSeconds: { label: 'lead time, mean (s)', unit: 'seconds' },
  leadTimeP95Seconds: { label: 'lead time, p95 (s)', unit: 'seconds' },
  stationStarvedFraction: { label: 'station starved', unit: 'percent' },
  deadlocks: { label: 'deadlock episodes (per replication)', unit: 'count' },
};

export function renderComparison(comparison: Comparison): string {
  const first = comparison.policies[0];
  const pct = Math.round(comparison.confidence * 100);
  const lines: string[] = [];
  lines.push(`${first.scenario} | ${first.robots} robots | ${first.replications} replications x ${first.hours} h | seed ${first.seed} | common random numbers`);
  lines.push(`${pct}% intervals over replications; each policy has its own warm-up cut:`);
  for (const summary of comparison.policies) lines.push(`  ${summary.policy}: ${describeWarmup(summary)}; ${describeStability(summary)}`);
  lines.push('');
  const rows: string[][] = [];
  for (const summary of comparison.policies) {
    for (const [metric, { label, unit }] of Object.entries(metricLabels)) {
      const row = intervalRow(label, summary[metric as 'throughputPerHour'], unit);
      rows.push([summary.policy, ...row]);
    }
  }
  lines.push(renderColumns(rows, ['policy', 'metric', 'mean', '± half-width', `${pct}% interval`]));
  lines.push('');
  const adjusted = comparison.differences[0]?.confidence ?? comparison.confidence;
  lines.push(
    `Paired differences (a - b), Bonferroni-adjusted to ${(adjusted * 100).toFixed(2)}% each so that all ${comparison.intervalsReported} intervals (pairs x metrics) hold together at ${pct}%:`,
  );
  const diffRows = comparison.differences.map((d) => {
    const { label, unit } = metricLabels[d.metric];
    const row = intervalRow(label, { mean: d.mean, halfWidth: d.halfWidth, low: d.low, high: d.high, n: d.n }, unit);
    const verdict = d.note !== null ? d.note : d.significant ? (d.mean > 0 ? `${d.a} higher` : `${d.b} higher`) : 'no significant difference';
    const unpaired = d.unpairedHalfWidth !== null && d.halfWidth !== null && d.halfWidth > 0 ? `${(d.unpairedHalfWidth / d.halfWidth).toFixed(1)}x` : '-';
    return [`${d.a} - ${d.b}`, ...row, verdict, unpaired];
  });
  lines.push(renderColumns(diffRows, ['pair', 'metric', 'mean', '± half-width', 'interval', 'verdict', 'unpaired/paired width']));
  const collisions = comparison.policies.map((p) => `${p.policy} ${p.collisions}`).join(', ');
  lines.push('');
  lines.push(`collisions (validator): ${collisions}`);
  lines.push('');
  lines.push(`Note: ${safetyNote}`);
  return lines.join('\n');
}
