/**
 * Benchmarks: PIBT (policies/pibt) on generated parcel halls (scenarios/generate.ts) under
 * saturated demand.
 *   - `pibt`: 1,000 robots on a 150 x 80 hall (parking for 1,000), one simulated hour.
 *   - `pibt-10k`: 10,000 robots on a 480 x 250 hall (120,000 cells, 123 inducts, 9,180 drops,
 *     parking for 10,000), 15 simulated minutes: robots drive out from the parking block on
 *     the east wall to the inducts on the west wall (about 450 cells) and then spread over
 *     thousands of different drops, which is what stresses the per-goal distance fields.
 * Each row reports agent-steps per wall second (an agent-step is one robot over one
 * simulated tick, whether or not it moved), the real-time factor (simulated seconds per
 * wall second), deliveries, the policy's share of wall time (the engine's own cost is the
 * rest, measured in the same run) and the distance work: full tables built
 * (sim/distance-table.ts), and windowed fields built (sim/distance-field.ts) with the cells
 * they swept (the window cells of every build, 32 at a time, plus the cells expanded by the
 * searches for cells that are not tight) and those searches. Wall time includes all of it, done lazily during the run. Beside
 * it, the process's CPU seconds over the run and the 1-minute load average at its end: on a
 * shared machine wall time grows with other processes' load, CPU time much less, so the two
 * together tell a slower program from a busier machine. `poolDepth` is the capacity pool's
 * final depth (sim/engine.ts capacityPoolDepth: it grows only when a step leaves robots idle
 * while the pool is full).
 *
 * Run directly: `npx tsx bench/pibt.ts [--json] [--10k] [hours | minutes with --10k]`.
 */
import os from 'node:os';
import { pibt } from '../policies/pibt/index.ts';
import { generateSortationHall } from '../scenarios/generate.ts';
import { DistanceTables } from '../sim/distance-table.ts';
import { runReplication } from '../sim/engine.ts';
import { parseLayout } from '../sim/layout.ts';
import { makeScenario } from '../test/helpers.ts';

export interface PibtBenchRow {
  name: 'pibt' | 'pibt-10k';
  policy: 'pibt';
  robots: number;
  hall: string;
  simulatedMinutes: number;
  simulatedHours: number;
  agentStepsPerSecond: number;
  realTimeFactor: number;
  wallSeconds: number;
  /** User + system CPU seconds of the process over the run (both cores count). */
  cpuSeconds: number;
  /** The machine's 1-minute load average at the end of the run. */
  loadAverage: number;
  /** Policy step time / wall time. */
  planningShare: number;
  delivered: number;
  collisions: number;
  deadlockEpisodes: number;
  /** Final depth of the capacity pool of open tasks. */
  poolDepth: number | null;
  tableBuilds: number;
  fieldBuilds: number;
  fieldCellsSearched: number;
  /** Searches for field cells that are not tight, and fields that fell back to a whole-floor search. */
  fieldSearches: number;
  fieldWholeFloorSearches: number;
  /** Resident set size at the end of the run, MB (the process's, so it includes earlier rows). */
  rssMegabytes: number;
}

function benchHall(name: PibtBenchRow['name'], width: number, height: number, robots: number, minutes: number): PibtBenchRow {
  const layoutText = generateSortationHall({ width, height, parking: robots });
  const scenario = makeScenario({ layout: layoutText, robots, policy: 'pibt', hours: minutes / 60, pickupSeconds: 4, dropSeconds: 3 });
  const layout = parseLayout(layoutText);
  const distances = new DistanceTables(layout);
  const cpuBefore = process.cpuUsage();
  const record = runReplication({ scenario, layout, distances, policy: pibt, policyOptions: pibt.options.parse({}) }, 0);
  const cpu = process.cpuUsage(cpuBefore);
  return {
    name,
    policy: 'pibt',
    robots,
    hall: `${width} x ${height}`,
    simulatedMinutes: minutes,
    simulatedHours: Number((minutes / 60).toFixed(4)),
    agentStepsPerSecond: Math.round(record.agentSteps / record.timing.wallSeconds),
    realTimeFactor: Math.round((record.endTick * record.tickSeconds) / record.timing.wallSeconds),
    wallSeconds: Number(record.timing.wallSeconds.toFixed(3)),
    cpuSeconds: Number(((cpu.user + cpu.system) / 1e6).toFixed(3)),
    loadAverage: Number(os.loadavg()[0].toFixed(2)),
    planningShare: Number((record.timing.planningSeconds / record.timing.wallSeconds).toFixed(3)),
    delivered: record.delivered,
    collisions: record.collisions,
    deadlockEpisodes: record.metrics.episodes.length,
    poolDepth: record.poolDepth,
    tableBuilds: distances.builds,
    fieldBuilds: distances.fields.builds,
    fieldCellsSearched: distances.fields.cellsSearched,
    fieldSearches: distances.fields.searches,
    fieldWholeFloorSearches: distances.fields.wholeFloorSearches,
    rssMegabytes: Math.round(process.memoryUsage().rss / 1e6),
  };
}

/** 1,000 robots on a 150 x 80 hall. */
export function benchPibt(hours = 1, robots = 1000): PibtBenchRow {
  return benchHall('pibt', 150, 80, robots, hours * 60);
}

/** 10,000 robots on a 480 x 250 hall. */
export function benchPibt10k(minutes = 15, robots = 10000): PibtBenchRow {
  return benchHall('pibt-10k', 480, 250, robots, minutes);
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const args = process.argv.slice(2);
  const lengthArgument = args.find((a) => !a.startsWith('--'));
  const row = args.includes('--10k')
    ? benchPibt10k(lengthArgument === undefined ? 15 : Number(lengthArgument))
    : benchPibt(lengthArgument === undefined ? 1 : Number(lengthArgument));
  if (args.includes('--json')) {
    process.stdout.write(`${JSON.stringify(row)}\n`);
  } else {
    process.stdout.write(
      `${row.name}, ${row.robots} robots, ${row.simulatedMinutes} min on a ${row.hall} hall: ${row.agentStepsPerSecond} agent-steps/s, ` +
        `${row.realTimeFactor}x real time (${row.wallSeconds} s wall, policy ${(row.planningShare * 100).toFixed(0)}% of it; ${row.cpuSeconds} s CPU, load ${row.loadAverage}), ` +
        `${row.delivered} delivered, ${row.collisions} collisions, ${row.deadlockEpisodes} deadlock episodes, pool ${row.poolDepth} tasks, ` +
        `${row.tableBuilds} tables, ${row.fieldBuilds} fields (${(row.fieldCellsSearched / 1e6).toFixed(1)} M cells, ${row.fieldSearches} searches), ${row.rssMegabytes} MB RSS\n`,
    );
  }
}
