/**
 * `context.json`: what produced a results folder, so that a report can say it exactly: the
 * command line, the fleetwright version, a SHA-256 of the effective scenario (the file with
 * every command-line override applied) and the scenario itself (layout, units, demand,
 * policy, run settings; a trace is named and counted, not copied).
 *
 * The hash is over a canonical JSON of the scenario (keys sorted, weight maps as sorted
 * cell->weight pairs, trace tasks included, the file's absolute path excluded), so the same
 * scenario gives the same hash on any machine and from any folder.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import type { Scenario } from '../sim/model.ts';

export interface RunContext {
  fleetwrightVersion: string;
  /** The command as typed, `fleetwright` and its arguments, shell-quoted. */
  command: string;
  scenarioFile: string | null;
  scenarioSha256: string;
  scenario: Record<string, unknown>;
}

const packageJson = path.resolve(import.meta.dirname, '..', 'package.json');
export const fleetwrightVersion: string = JSON.parse(readFileSync(packageJson, 'utf8')).version;

/** POSIX shell quoting of arguments that need it. */
export function commandLine(argv: readonly string[]): string {
  const quote = (a: string) => (/^[A-Za-z0-9_@%+=:,./-]+$/.test(a) ? a : `'${a.replace(/'/g, `'\\''`)}'`);
  return ['fleetwright', ...argv.map(quote)].join(' ');
}

/** Plain JSON value of a scenario part: Maps become sorted [key, value] pairs, keys sorted. */
function canonical(value: unknown): unknown {
  if (value instanceof Map) return [...value.entries()].sort((a, b) => (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0)).map(([k, v]) => [canonical(k), canonical(v)]);
  if (Array.isArray(value)) return value.map(canonical);
  if (value !== null && typeof value === 'object') {
    const out: Record<string, unknown> = {};
    for (const key of Object.keys(value).sort()) out[key] = canonical((value as Record<string, unknown>)[key]);
    return out;
  }
  return value;
}

export function scenarioSha256(scenario: Scenario): string {
  const { sourcePath: _path, ...content } = scenario;
  const demand = content.demand.kind === 'trace' ? { ...content.demand, tracePath: path.basename(content.demand.tracePath) } : content.demand;
  return createHash('sha256').update(JSON.stringify(canonical({ ...content, demand }))).digest('hex');
}

export function runContext(scenario: Scenario, argv: readonly string[]): RunContext {
  const { sourcePath, ...content } = scenario;
  const demand =
    content.demand.kind === 'trace'
      ? { kind: 'trace', mode: content.demand.mode, trace: path.basename(content.demand.tracePath), tasks: content.demand.tasks.length }
      : content.demand;
  return {
    fleetwrightVersion,
    command: commandLine(argv),
    scenarioFile: sourcePath === null ? null : path.basename(sourcePath),
    scenarioSha256: scenarioSha256(scenario),
    scenario: canonical({ ...content, demand }) as Record<string, unknown>,
  };
}

/**
 * `context.json` of a sweep folder: the run context of the plan's scenario as the file has
 * it (before any `vary` value; each point's own scenario is in its run lines' ids), the
 * plan's file name and hash, what it varies, and the shard this folder holds. Nothing in it
 * depends on the clock, the machine or the folder it is written to, so every shard of a
 * plan writes the same context apart from `command` and `shard`, and a merge writes the
 * shards' context with its own command and the shards' commands in shard order.
 */
export interface SweepContext extends RunContext {
  sweepFile: string;
  /** The plan's hash (plan.json `planHash`: every run id in order, and the varied paths). */
  planSha256: string;
  vary: string[];
  replications: number;
  runs: number;
  shard: { index: number; count: number } | null;
  /** A merged folder: the command that wrote each shard folder, in the order given to merge. */
  shardCommands?: string[];
}

export function sweepContext(
  scenario: Scenario,
  argv: readonly string[],
  plan: { sweepFile: string; planHash: string; vary: string[]; replications: number; runs: number; shard: { index: number; count: number } | null },
): SweepContext {
  return {
    ...runContext(scenario, argv),
    sweepFile: path.basename(plan.sweepFile),
    planSha256: plan.planHash,
    vary: plan.vary,
    replications: plan.replications,
    runs: plan.runs,
    shard: plan.shard,
  };
}
