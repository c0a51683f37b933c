/**
 * Run ids: a run is one replication of one fully resolved scenario, and its id is a hash of
 * that content (SHA-256 of a canonical JSON form, 16 hex digits), so the same run gets the
 * same id in any sweep, shard, worker or machine, and any change to what would be simulated
 * (layout, demand, handling, policy and its options with defaults filled in, run settings,
 * seed, replication index) gives another id. The replication count is left out: it does
 * not change what replication i computes.
 */
import { createHash } from 'node:crypto';
import type { Scenario } from '../sim/model.ts';
import { findPolicy, parsePolicyOptions } from '../policies/registry.ts';

/** Bumped when the content of a result line changes meaning; part of every id. */
export const resultFormat = 1;

/** JSON with object keys sorted at every level, Maps as sorted [key, value] lists. */
export function canonicalJson(value: unknown): string {
  const normalize = (v: unknown): unknown => {
    if (v instanceof Map) return [...v.entries()].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0)).map(([k, x]) => [normalize(k), normalize(x)]);
    if (Array.isArray(v)) return v.map(normalize);
    if (ArrayBuffer.isView(v)) return Array.from(v as unknown as ArrayLike<number>);
    if (v !== null && typeof v === 'object') {
      const out: Record<string, unknown> = {};
      for (const key of Object.keys(v).sort()) {
        const x = (v as Record<string, unknown>)[key];
        if (x !== undefined) out[key] = normalize(x);
      }
      return out;
    }
    if (typeof v === 'number' && !Number.isFinite(v)) return String(v);
    return v;
  };
  return JSON.stringify(normalize(value));
}

export function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** What a scenario simulates, without the file it came from and the replication count. */
export function scenarioContent(scenario: Scenario): unknown {
  const { sourcePath: _source, run, policy, demand, ...rest } = scenario;
  const { replications: _replications, ...runContent } = run;
  // A trace's rows are content; the file's path is not.
  const demandContent = demand.kind === 'trace' ? { ...demand, tracePath: undefined } : demand;
  let options: unknown = policy.options;
  try {
    options = parsePolicyOptions(findPolicy(policy.name), policy.options);
  } catch {
    // Invalid options are reported when the run is prepared; the id stays defined.
  }
  return { ...rest, demand: demandContent, policy: { name: policy.name, options }, run: runContent };
}

/** Hash of a scenario's content (equal for scenarios that simulate the same thing). */
export function scenarioKey(scenario: Scenario): string {
  return sha256(canonicalJson({ resultFormat, scenario: scenarioContent(scenario) }));
}

export function runId(scenario: Scenario, replication: number): string {
  return sha256(canonicalJson({ resultFormat, scenario: scenarioContent(scenario), replication })).slice(0, 16);
}
