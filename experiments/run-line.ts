/**
 * A finished sweep run as its line of runs.jsonl: id, place in the plan, parameters and the
 * run summary of that one replication (reports/summary.ts, its own warm-up cut), with the
 * wall-clock figures moved out to the line's `timing`. Built where the replication ran (a
 * worker thread), so the main thread only writes lines.
 */
import type { Scenario } from '../sim/model.ts';
import type { ReplicationRecord } from '../sim/engine.ts';
import { summarize } from '../reports/summary.ts';

export interface RunLineHeader {
  id: string;
  run: number;
  point: number;
  replication: number;
  parameters: Record<string, unknown>;
}

/** JSON on one line with NaN and infinities as null. */
export function jsonLine(value: unknown): string {
  return JSON.stringify(value, (_key, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v));
}

export function runLine(header: RunLineHeader, scenario: Scenario, record: ReplicationRecord): string {
  const { summary } = summarize(scenario, [record], record.timing.wallSeconds);
  const { timing, ...content } = summary;
  return jsonLine({ ...header, summary: content, timing });
}
