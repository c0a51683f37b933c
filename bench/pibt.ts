/**
 * Benchmark: PIBT (policies/pibt) with 1,000 robots on a generated 150 x 80 parcel hall
 * (scenarios/generate.ts, parking for 1,000) under saturated demand, one simulated hour.
 * Reports agent-steps per wall second (one robot advanced by one tick = one agent-step),
 * the real-time factor (simulated seconds per wall second) and the policy's share of wall
 * time, so the engine's own cost is the baseline measured in the same run. Wall time
 * includes building the distance tables of the 780 drops, 38 inducts and used parking
 * spots (breadth-first searches done lazily during the run).
 *
 * Run directly: `npx tsx bench/pibt.ts [--json] [hours]`.
 */
import { pibt } from '../policies/pibt/index.ts';
import { generateSortationHall } from '../scenarios/generate.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication } from '../sim/engine.ts';
import { parseLayout } from '../sim/layout.ts';
import { makeScenario } from '../test/helpers.ts';

export interface PibtBenchRow {
  name: 'pibt';
  policy: 'pibt';
  robots: number;
  simulatedHours: number;
  agentStepsPerSecond: number;
  realTimeFactor: number;
  wallSeconds: number;
  /** Policy step time / wall time. */
  planningShare: number;
  delivered: number;
  collisions: number;
  deadlockEpisodes: number;
}

export function benchPibt(hours = 1, robots = 1000): PibtBenchRow {
  const layoutText = generateSortationHall({ width: 150, height: 80, parking: robots });
  const scenario = makeScenario({ layout: layoutText, robots, policy: 'pibt', hours, pickupSeconds: 4, dropSeconds: 3 });
  const layout = parseLayout(layoutText);
  const record = runReplication({ scenario, layout, distances: new DistanceTables(layout), policy: pibt, policyOptions: pibt.options.parse({}) }, 0);
  return {
    name: 'pibt',
    policy: 'pibt',
    robots,
    simulatedHours: hours,
    agentStepsPerSecond: Math.round(record.agentSteps / record.wallSeconds),
    realTimeFactor: Math.round((record.endTick * record.tickSeconds) / record.wallSeconds),
    wallSeconds: Number(record.wallSeconds.toFixed(3)),
    planningShare: Number((record.planningSeconds / record.wallSeconds).toFixed(3)),
    delivered: record.delivered,
    collisions: record.collisions,
    deadlockEpisodes: record.metrics.episodes.length,
  };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const args = process.argv.slice(2);
  const hoursArgument = args.find((a) => !a.startsWith('--'));
  const row = benchPibt(hoursArgument === undefined ? 1 : Number(hoursArgument));
  if (args.includes('--json')) {
    process.stdout.write(`${JSON.stringify(row)}\n`);
  } else {
    process.stdout.write(
      `pibt, ${row.robots} robots, ${row.simulatedHours} h on a 150 x 80 hall: ${row.agentStepsPerSecond} agent-steps/s, ` +
        `${row.realTimeFactor}x real time (${row.wallSeconds} s wall, policy ${(row.planningShare * 100).toFixed(0)}% of it), ` +
        `${row.delivered} delivered, ${row.collisions} collisions, ${row.deadlockEpisodes} deadlock episodes\n`,
    );
  }
}
