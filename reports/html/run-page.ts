/**
 * The report of one run (`run --out`): headline numbers with intervals, what limits the
 * fleet (robots busy, robots parked while work waited, tasks held back by the policy's
 * rules, stability, the demand mix), the scenario and its floor with the waiting heatmap,
 * throughput over time, pickup stations (their time split: busy, no robot assigned, robot
 * on its way, no work; queue time) and drops apart, the lead-time distribution, the robot
 * time split, deadlocks, the safety note and where the numbers came from.
 */
import { floorMap } from './floor-map.ts';
import * as Plot from '@observablehq/plot';
import { chartFigure, dataTable, renderPlot } from './plot.ts';
import { intervalBars } from './charts/interval-bars.ts';
import { dropRows, dropStationChart, pickupRows, pickupStationChart } from './charts/station-charts.ts';
import { leadTimeChart } from './charts/lead-time-histogram.ts';
import { throughputOverTime } from './charts/throughput-over-time.ts';
import { brokenColour, chargingColour, robotTimeColours, stateColours } from './palette.ts';
import { duration, fixed, intervalText, percent } from './format.ts';
import { cards, demandText, facts, heading, provenance, safetyBlock, warnings } from './sections.ts';
import { escapeHtml } from './escape.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

export const robotTimeLabels = ['loaded travel', 'empty travel', 'handling', 'waiting / blocked', 'parked (no task)'] as const;
const robotTimeKeys = ['loaded', 'empty', 'handling', 'waiting', 'parked'] as const;

/** Above this total variation distance the served tasks stray from the demand's mix (the table's warning threshold, README "demand mix gap"). */
const mixGapWarning = 0.05;

/** Warnings a reader must see before any number. */
export function runWarnings(summary: Json): string[] {
  const out: string[] = [];
  if (summary.collisions > 0) out.push(`The collision validator counted ${summary.collisions} collisions: the policy is defective and these numbers are not valid.`);
  if (summary.wellFormed === false && summary.wellFormedWithRestCells !== true) out.push(`The floor is not well-formed for ${summary.robots} robots (${summary.wellFormedViolation ?? 'see fleetwright check'}): planned policies may not finish every task.`);
  if (summary.stable === false) {
    out.push(
      `The backlog grew during the run (${intervalText(summary.backlogGrowthPerHour, 1)} tasks per hour: demand above what the fleet delivers): lead times are lower bounds (tasks still waiting count with their age so far) without an interval, and throughput is what the fleet managed, not the demand served.`,
    );
  }
  if (summary.warmup?.tooShort) out.push('The warm-up cut fell near half the run: the run is too short for a steady state; run longer before trusting these figures.');
  const gap = summary.littlesLaw?.relativeGap;
  if (typeof gap === 'number' && gap > 0.1 && summary.stable === true) out.push(`Little's law is off by ${(gap * 100).toFixed(0)}% (tasks in system vs throughput x lead time): the run may be too short.`);
  for (const group of ['pickup', 'drop'] as const) {
    const value = summary.demandMixGap?.[group];
    if (typeof value === 'number' && value > mixGapWarning) out.push(`The tasks served stray from the demand's mix at the ${group} stations (gap ${percent(value)}): some station's work is left waiting, so this throughput is not sustainable for this demand.`);
  }
  if (summary.trace?.notReleased > 0) out.push(`${summary.trace.notReleased} trace rows fall after the end of the run and were never released.`);
  return out;
}

/** yes, NO (growth shown) or undetermined (the growth interval too wide to show a bounded backlog); – for capacity runs. */
function stableWord(summary: Json): string {
  if (summary.stable === null || summary.stable === undefined) return '–';
  if (summary.stable === false) return 'NO';
  return summary.stabilityVerdict === 'undetermined' ? 'undetermined' : 'yes';
}

/** Lead time as the page shows it: an interval, or a lower bound at an unstable run. */
function leadCard(summary: Json, key: string): { value: string; unit: string } {
  const interval = summary[key];
  if (summary.capacityRun) return { value: '–', unit: 'capacity run: no lead time' };
  if (summary.leadTimeIncludesOpenTasks || summary.stable === false) return { value: `≥ ${fixed(interval?.mean, 1)}`, unit: 's, lower bound (unstable: no interval)' };
  return { value: fixed(interval?.mean, 1), unit: `± ${fixed(interval?.halfWidth, 1)} s` };
}

export function headlineCards(summary: Json): string {
  const mean = leadCard(summary, 'leadTimeSeconds');
  const p95 = leadCard(summary, 'leadTimeP95Seconds');
  const pickup = summary.stationGroups?.pickup;
  return cards([
    { label: 'Throughput', value: fixed(summary.throughputPerHour?.mean, 1), unit: `± ${fixed(summary.throughputPerHour?.halfWidth, 1)} tasks/h`, field: 'throughputPerHour.mean' },
    { label: 'Lead time, mean', value: mean.value, unit: mean.unit, field: 'leadTimeSeconds.mean' },
    { label: 'Lead time, 95th percentile', value: p95.value, unit: p95.unit, field: 'leadTimeP95Seconds.mean' },
    { label: 'Stable', value: stableWord(summary), unit: summary.stable === null ? 'capacity run' : `backlog ${intervalText(summary.backlogGrowthPerHour, 1)} tasks/h`, field: 'stable' },
    { label: 'Robots busy (holding a task)', value: fixed(summary.busyRobots?.mean, 1), unit: `of ${summary.robots}, ± ${fixed(summary.busyRobots?.halfWidth, 1)}`, field: 'busyRobots.mean' },
    {
      label: 'Pickups idle, work waits, no robot',
      value: percent(pickup?.noRobotWhileWorkWaitsFraction?.mean ?? summary.stationStarvedFraction?.mean),
      unit: `± ${percent(pickup?.noRobotWhileWorkWaitsFraction?.halfWidth ?? summary.stationStarvedFraction?.halfWidth)} of their time`,
      field: 'stationStarvedFraction.mean',
    },
    { label: 'Deadlock episodes per replication', value: fixed(summary.deadlocks?.mean, 2), unit: `${fixed(summary.deadlockRobotHoursLost?.mean, 2)} robot-hours lost`, field: 'deadlocks.mean' },
    { label: 'Collisions (validator)', value: String(summary.collisions ?? '–'), unit: 'must be 0', field: 'collisions' },
  ]);
}

/** The figures that say what limits the fleet, one line each (only those the summary has). */
function limitFacts(summary: Json): [string, string][] {
  const rows: [string, string][] = [];
  if (summary.busyRobots) rows.push(['robots busy', `${intervalText(summary.busyRobots, 1)} of ${summary.robots} robots hold a task on average`]);
  if (summary.parkedWhileTasksOpenFraction) rows.push(['parked while tasks waited', `${intervalText(summary.parkedWhileTasksOpenFraction, 1, 100)}% of robot time a robot stood parked without a task while released tasks waited for one (the policy's rules, not the fleet, limit throughput when this is high under load)`]);
  const held = summary.policyLimits?.heldBackTaskSecondsPerHour;
  if (held) rows.push(['held back by the policy', `${intervalText(held, 0)} task-seconds per hour (${fixed((held.mean ?? NaN) / 3600, 1)} tasks on average) could not be taken by any robot under ${summary.policy}'s own rules`]);
  const pickup = summary.stationGroups?.pickup;
  if (pickup?.noRobotWhileWorkWaitsFraction) {
    rows.push([
      'pickup stations',
      `busy ${intervalText(pickup.utilisation, 1, 100)}%; idle while work waited with no robot assigned ${intervalText(pickup.noRobotWhileWorkWaitsFraction, 1, 100)}%, with a robot on its way ${intervalText(pickup.robotTravellingWhileWorkWaitsFraction, 1, 100)}%; queue ${intervalText(pickup.queueSecondsPerHour, 1)} robot-seconds per hour per station; busiest ${pickup.busiest ? `${pickup.busiest.cell} (${percent(pickup.busiest.utilisation)})` : '–'}`,
    ]);
  }
  const drop = summary.stationGroups?.drop;
  if (drop?.utilisation && Number.isFinite(drop.utilisation.mean)) rows.push(['drops', `busy ${intervalText(drop.utilisation, 2, 100)}% on average; busiest ${drop.busiest ? `${drop.busiest.cell} (${percent(drop.busiest.utilisation)})` : '–'}`]);
  if (summary.demandMixGap) rows.push(['demand mix gap', `pickups ${percent(summary.demandMixGap.pickup)}, drops ${percent(summary.demandMixGap.drop)} (0 = tasks served in the demand's proportions; above ${percent(mixGapWarning, 0)} some station's work is left waiting)`]);
  if (summary.stable !== undefined) {
    rows.push([
      'stable',
      summary.stable === null
        ? 'not assessed (capacity run: demand saturates the fleet)'
        : `${stableWord(summary)}: backlog growth ${intervalText(summary.backlogGrowthPerHour, 1)} tasks per hour after the warm-up (material above ${fixed(summary.stability?.materialGrowthPerHour, 1)}); ${(summary.stability?.perReplication ?? []).filter((r: Json) => r.stable).length} of ${summary.replications} replications stable on their own${summary.stabilityVerdict === 'undetermined' ? '; the growth interval is too wide to show a bounded backlog: more replications or longer runs decide' : ''}`,
    ]);
  }
  if (summary.livelocks || summary.gridlocks) rows.push(['deadlocks, livelocks, gridlocks', `per replication: ${intervalText(summary.deadlocks, 2)} deadlocks, ${intervalText(summary.livelocks, 2)} livelocks, ${intervalText(summary.gridlocks, 2)} fleet gridlocks; ${intervalText(summary.deadlockRobotHoursLost, 2)} robot-hours lost`]);
  if (summary.availability) rows.push(['availability', `${intervalText(summary.availability, 1, 100)}% of robot time not broken down${summary.breakdowns ? ` (MTBF / (MTBF + MTTR) = ${percent(summary.breakdowns.expectedAvailability)}; ${intervalText(summary.breakdowns.failuresPerHour, 2)} breakdowns per hour${summary.breakdowns.throughputLostPerHour ? `; they cost ${intervalText(summary.breakdowns.throughputLostPerHour, 1)} tasks/h` : ''})` : ''}`]);
  if (summary.charging) rows.push(['charging', `chargers busy ${intervalText(summary.charging.chargerUtilisation, 1, 100)}%; ${intervalText(summary.charging.queueRobots, 2)} robots waiting for one on average; ${intervalText(summary.charging.chargesPerHour, 1)} charges per hour${summary.charging.ranFlat > 0 ? `; ${summary.charging.ranFlat} robots RAN FLAT (the figures are optimistic)` : ''}`]);
  if (typeof summary.restCellsUsed === 'number' && summary.restCellsUsed > 0) rows.push(['rest cells', `${summary.restCellsUsed} robots rest on rest cells beyond the parking spots; the floor is ${summary.wellFormedWithRestCells ? '' : 'NOT '}well-formed with them`]);
  if (summary.capacityRun) rows.push(['capacity pool', `saturated demand: the open-task pool ended ${summary.capacityPoolDepth ?? '–'} deep; lead time and tasks in system of an artificial pool are not reported${summary.capacityPoolAtCap ? '. The pool reached its cap with robots still idle (the policy’s rules held the tasks back): this capacity needs a queue that deep and is an upper bound, not a sustained rate; judge the fleet at the target rate' : ''}`]);
  return rows;
}

export function runPage(results: ResultsFolder): { title: string; body: string } {
  const summary = results.document;
  const scenario = results.context?.scenario as Json | undefined;
  const cellMeters = scenario?.units?.cellMeters ?? 1;
  const title = `Run report: ${summary.scenario}`;
  const subtitle = `${summary.policy}, ${summary.robots} robots, ${summary.replications} replication${summary.replications === 1 ? '' : 's'} of ${duration(summary.hours * 3600)}, seed ${summary.seed}, ${Math.round(summary.confidence * 100)}% intervals (${summary.intervalMethod === 'batch-means' ? 'batch means of one run' : 'over replications'})`;
  const parts: string[] = [heading(title, subtitle), safetyBlock(), warnings(runWarnings(summary)), headlineCards(summary)];

  parts.push('<h2 id="section-limits">What limits the fleet</h2>');
  parts.push(facts(limitFacts(summary)));

  parts.push('<h2 id="section-scenario">Scenario and floor</h2>');
  parts.push(
    facts([
      ['scenario', String(summary.scenario)],
      ['policy', String(summary.policy)],
      ['robots', String(summary.robots)],
      ['demand', demandText(scenario)],
      ['robot speed', scenario ? `${scenario.units.robotSpeedMps} m/s, cells of ${scenario.units.cellMeters} m` : 'unknown'],
      ['simulated', `${summary.replications} x ${duration(summary.hours * 3600)}, warm-up cut ${duration(summary.warmupSeconds)} (${summary.warmup?.method ?? 'unknown'}${summary.warmup?.note ? `: ${summary.warmup.note}` : ''})`],
      ['tasks', `${summary.tasks.released} released, ${summary.tasks.delivered} delivered, ${summary.tasks.open} open at the end (all replications, warm-up included)`],
    ]),
  );
  if (results.cells) {
    const map = floorMap(results.cells, cellMeters);
    parts.push(
      chartFigure(
        'floor',
        'The floor to scale, with where robots waited',
        'Walls dark, parking and storage light grey, stations outlined (P pickup, D drop). Coloured cells: robot-seconds of waiting per simulated hour (a robot holding a task that did not move), whole run, mean over replications. Hot cells are where traffic jams or queues form.',
        map.svg,
        map.table,
      ),
    );
  } else {
    parts.push('<p>No cells.csv in the folder (written by an older fleetwright): the floor and its heatmap are left out.</p>');
  }

  parts.push('<h2 id="section-throughput">Throughput</h2>');
  if (results.throughput) parts.push(throughputOverTime(results.throughput, summary.warmupSeconds).html);

  parts.push('<h2 id="section-stations">Stations</h2>');
  const stations: Json[] = summary.stations ?? [];
  const pickups = pickupRows(stations);
  const drops = dropRows(stations);
  if (pickups.length > 0) parts.push(pickupStationChart('stations', pickups, 'Pickup stations: where their time went', 'stations.csv').html);
  if (drops.length > 0) parts.push(dropStationChart('drops', drops, 'Drops: how busy each one was', 'stations.csv').html);

  parts.push('<h2 id="section-lead-time">Lead time</h2>');
  if (summary.capacityRun) {
    parts.push('<p>A capacity run (saturated demand) keeps an artificial pool of open tasks: its lead times mean nothing and are not drawn.</p>');
  } else if (results.leadTimes) {
    const lowerBound = summary.leadTimeIncludesOpenTasks === true;
    parts.push(
      leadTimeChart('lead-time', results.leadTimes, [
        { label: lowerBound ? 'mean ≥' : 'mean', seconds: summary.leadTimeSeconds?.mean },
        { label: lowerBound ? 'p95 ≥' : 'p95', seconds: summary.leadTimeP95Seconds?.mean },
      ]).html,
    );
  } else {
    parts.push('<p>No lead-times.csv in the folder: the distribution is left out.</p>');
  }
  const split = summary.leadTimeSplit;
  if (split && !summary.capacityRun) {
    const bars = intervalBars(
      [
        { label: 'waiting for a robot', interval: split.waitingForRobotSeconds, colour: stateColours.stalled },
        { label: 'empty travel', interval: split.emptyTravelSeconds, colour: stateColours.empty },
        { label: 'loaded travel', interval: split.loadedTravelSeconds, colour: stateColours.loaded },
        { label: 'handling', interval: split.handlingSeconds, colour: stateColours.handling },
      ],
      { axisLabel: 'seconds of the mean lead time', caption: 'Mean lead time in four parts', digits: 1, unit: 's' },
    );
    parts.push(
      chartFigure(
        'lead-time-split',
        'Where the lead time goes',
        `The mean lead time of tasks delivered after the warm-up in four parts that add up to it: waiting for a robot (release to the assignment that carried it), empty travel to the pickup, loaded travel to the drop, and handling at both. Long waiting for a robot means too few robots or a dispatch that leaves work waiting; travel includes every stop on the way.${summary.stable === false ? ' The run is unstable: the parts have no interval.' : ''}`,
        bars.svg,
        bars.table,
      ),
    );
  }
  const hourly = summary.hourly;
  if (hourly && Array.isArray(hourly.rows) && hourly.rows.length > 0) {
    parts.push(
      chartFigure(
        'hourly',
        'Throughput and lead time per hour of the demand profile',
        `Per hour of the profile (run hours counted after the warm-up: ${hourly.hoursCounted}), offered and delivered tasks per hour and the mean lead time of the tasks released in that hour. The peak hour (${hourly.peakHour + 1}) is what a site is sized for.`,
        hourlyChart(hourly.rows),
        dataTable(
          'Per hour of the profile',
          [
            { label: 'hour', value: (r: Json) => `${r.hour + 1}${r.hour === hourly.peakHour ? ' (peak)' : ''}` },
            { label: 'multiplier', value: (r: Json) => fixed(r.multiplier, 2), numeric: true },
            { label: 'released (tasks/h)', value: (r: Json) => intervalText(r.releasedPerHour, 1), numeric: true },
            { label: 'throughput (tasks/h)', value: (r: Json) => intervalText(r.throughputPerHour, 1), numeric: true },
            { label: 'lead time (s)', value: (r: Json) => intervalText(r.leadTimeSeconds, 1), numeric: true },
          ],
          hourly.rows,
        ),
      ),
    );
  }

  parts.push('<h2 id="section-robot-time">Robot time</h2>');
  const robotTime = intervalBars(
    [
      ...robotTimeKeys.map((key, i) => ({ label: robotTimeLabels[i], interval: summary.robotTime[key], colour: robotTimeColours[i] })),
      // With a battery or breakdowns the split has these parts too (the shares still add up to 1).
      ...(summary.robotTime.charging ? [{ label: 'charging', interval: summary.robotTime.charging, colour: chargingColour }] : []),
      ...(summary.robotTime.broken ? [{ label: 'broken down', interval: summary.robotTime.broken, colour: brokenColour }] : []),
    ],
    { axisLabel: 'share of robot time (%)', caption: 'Robot time split', digits: 1, scale: 100, unit: '%' },
  );
  parts.push(
    chartFigure(
      'robot-time',
      'How robots spent their time',
      'Share of all robot time after the warm-up, with its confidence interval. Much waiting means congestion; much parking means more robots than the work needs (or, with tasks waiting, a policy that does not use them).',
      robotTime.svg,
      robotTime.table,
    ),
  );

  parts.push('<h2 id="section-deadlocks">Deadlocks</h2>');
  parts.push(
    `<p>${escapeHtml(
      `Deadlock episodes per replication: ${intervalText(summary.deadlocks, 2)}; robot-hours lost to them: ${intervalText(summary.deadlockRobotHoursLost, 2)}.${summary.livelocks ? ` Livelocks: ${intervalText(summary.livelocks, 2)}.` : ''}${summary.gridlocks ? ` Fleet gridlocks: ${intervalText(summary.gridlocks, 2)}.` : ''} Record a run (run --record) and open it with fleetwright replay to watch where they happen.`,
    )}</p>`,
  );

  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}

/** Offered and delivered tasks per hour of the profile (two lines) with their intervals. */
function hourlyChart(rows: Json[]): string {
  const data = rows.flatMap((r) => [
    { hour: r.hour + 1, series: 'offered (released)', mean: r.releasedPerHour?.mean, low: r.releasedPerHour?.low, high: r.releasedPerHour?.high },
    { hour: r.hour + 1, series: 'delivered', mean: r.throughputPerHour?.mean, low: r.throughputPerHour?.low, high: r.throughputPerHour?.high },
  ]).filter((d) => Number.isFinite(d.mean));
  return renderPlot({
    width: 880,
    height: 260,
    marginLeft: 60,
    x: { label: 'hour of the profile', ticks: rows.map((r) => r.hour + 1), tickFormat: 'd' },
    y: { grid: true, label: 'tasks per hour', nice: true, zero: true },
    color: { domain: ['offered (released)', 'delivered'], range: ['#777777', stateColours.loaded], legend: true },
    marks: [
      Plot.ruleY([0]),
      Plot.line(data, { x: 'hour', y: 'mean', stroke: 'series', strokeWidth: 1.5 }),
      Plot.ruleX(data.filter((d) => d.low !== null && d.high !== null && d.low !== undefined), { x: 'hour', y1: 'low', y2: 'high', stroke: 'series', strokeWidth: 2 }),
      Plot.dot(data, { x: 'hour', y: 'mean', fill: 'series', r: 3.5, className: 'mark-hourly-point' }),
    ],
  });
}
