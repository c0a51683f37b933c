/**
 * The report of one run (`run --out`): headline numbers with intervals, the scenario and
 * its floor with the waiting heatmap, throughput over time, stations, lead-time
 * distribution, robot time split, deadlocks, the safety note and where the numbers came from.
 */
import { floorMap } from './floor-map.ts';
import { chartFigure } from './plot.ts';
import { intervalBars } from './charts/interval-bars.ts';
import { stationBars, stationRows } from './charts/station-bars.ts';
import { leadTimeChart } from './charts/lead-time-histogram.ts';
import { throughputOverTime } from './charts/throughput-over-time.ts';
import { robotTimeColours } from './palette.ts';
import { duration, fixed, intervalText, percent } from './format.ts';
import { cards, demandText, facts, heading, provenance, safetyBlock, warnings } from './sections.ts';
import { escapeHtml } from './escape.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

export const robotTimeLabels = ['loaded travel', 'empty travel', 'handling', 'waiting / blocked', 'parked (no task)'] as const;
const robotTimeKeys = ['loaded', 'empty', 'handling', 'waiting', 'parked'] as const;

/** Warnings a reader must see before any number. */
export function runWarnings(summary: Json): string[] {
  const out: string[] = [];
  if (summary.collisions > 0) out.push(`The collision validator counted ${summary.collisions} collisions: the policy is defective and these numbers are not valid.`);
  if (summary.wellFormed === false) out.push(`The floor is not well-formed for ${summary.robots} robots (${summary.wellFormedViolation ?? 'see fleetwright check'}): planned policies may not finish every task.`);
  if (summary.stable === false) out.push('The backlog grew during the run (demand above capacity): lead times are biased low and throughput is capacity, not demand served.');
  if (summary.warmup?.tooShort) out.push('The warm-up cut fell near half the run: the run is too short for a steady state; run longer before trusting these figures.');
  const gap = summary.littlesLaw?.relativeGap;
  if (typeof gap === 'number' && gap > 0.1 && summary.stable !== false) out.push(`Little's law is off by ${(gap * 100).toFixed(0)}% (tasks in system vs throughput x lead time): demand may exceed capacity or the run is too short.`);
  return out;
}

export function headlineCards(summary: Json): string {
  return cards([
    { label: 'Throughput', value: fixed(summary.throughputPerHour?.mean, 1), unit: `± ${fixed(summary.throughputPerHour?.halfWidth, 1)} tasks/h`, field: 'throughputPerHour.mean' },
    { label: 'Lead time, mean', value: fixed(summary.leadTimeSeconds?.mean, 1), unit: `± ${fixed(summary.leadTimeSeconds?.halfWidth, 1)} s`, field: 'leadTimeSeconds.mean' },
    { label: 'Lead time, 95th percentile', value: fixed(summary.leadTimeP95Seconds?.mean, 1), unit: `± ${fixed(summary.leadTimeP95Seconds?.halfWidth, 1)} s`, field: 'leadTimeP95Seconds.mean' },
    { label: 'Stations idle while work waited', value: percent(summary.stationStarvedFraction?.mean), unit: `± ${percent(summary.stationStarvedFraction?.halfWidth)}`, field: 'stationStarvedFraction.mean' },
    { label: 'Deadlock episodes per replication', value: fixed(summary.deadlocks?.mean, 2), unit: `${fixed(summary.deadlockRobotHoursLost?.mean, 2)} robot-hours lost`, field: 'deadlocks.mean' },
    { label: 'Collisions (validator)', value: String(summary.collisions ?? '–'), unit: 'must be 0', field: 'collisions' },
  ]);
}

export function runPage(results: ResultsFolder): { title: string; body: string } {
  const summary = results.document;
  const scenario = results.context?.scenario as Json | undefined;
  const cellMeters = scenario?.units?.cellMeters ?? 1;
  const title = `Run report: ${summary.scenario}`;
  const subtitle = `${summary.policy}, ${summary.robots} robots, ${summary.replications} replication${summary.replications === 1 ? '' : 's'} of ${duration(summary.hours * 3600)}, seed ${summary.seed}, ${Math.round(summary.confidence * 100)}% intervals (${summary.intervalMethod === 'batch-means' ? 'batch means of one run' : 'over replications'})`;
  const parts: string[] = [heading(title, subtitle), safetyBlock(), warnings(runWarnings(summary)), headlineCards(summary)];

  parts.push('<h2 id="scenario">Scenario and floor</h2>');
  parts.push(
    facts([
      ['scenario', String(summary.scenario)],
      ['policy', String(summary.policy)],
      ['robots', String(summary.robots)],
      ['demand', demandText(scenario)],
      ['robot speed', scenario ? `${scenario.units.robotSpeedMps} m/s, cells of ${scenario.units.cellMeters} m` : 'unknown'],
      ['simulated', `${summary.replications} x ${duration(summary.hours * 3600)}, warm-up cut ${duration(summary.warmupSeconds)} (${summary.warmup?.method ?? 'unknown'})`],
      ['stable', summary.stable === undefined ? 'not assessed by this fleetwright' : summary.stable === null ? 'not assessed (capacity run: demand saturates the fleet)' : `${summary.stable ? 'yes' : 'no'}, backlog growth ${intervalText(summary.backlogGrowthPerHour, 1)} tasks per hour`],
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

  parts.push('<h2 id="throughput">Throughput</h2>');
  if (results.throughput) parts.push(throughputOverTime(results.throughput, summary.warmupSeconds).html);

  parts.push('<h2 id="stations">Stations</h2>');
  parts.push(stationBars('stations', stationRows(summary.stations ?? [])).html);

  parts.push('<h2 id="lead-time">Lead time</h2>');
  if (results.leadTimes) {
    parts.push(
      leadTimeChart('lead-time', results.leadTimes, [
        { label: 'mean', seconds: summary.leadTimeSeconds?.mean },
        { label: 'p95', seconds: summary.leadTimeP95Seconds?.mean },
      ]).html,
    );
  } else {
    parts.push('<p>No lead-times.csv in the folder: the distribution is left out.</p>');
  }

  parts.push('<h2 id="robot-time">Robot time</h2>');
  const robotTime = intervalBars(
    robotTimeKeys.map((key, i) => ({ label: robotTimeLabels[i], interval: summary.robotTime[key], colour: robotTimeColours[i] })),
    { axisLabel: 'share of robot time (%)', caption: 'Robot time split', digits: 1, scale: 100, unit: '%' },
  );
  parts.push(
    chartFigure(
      'robot-time',
      'How robots spent their time',
      'Share of all robot time after the warm-up, with its confidence interval. Much waiting means congestion; much parking means more robots than the work needs.',
      robotTime.svg,
      robotTime.table,
    ),
  );

  parts.push('<h2 id="deadlocks">Deadlocks</h2>');
  parts.push(
    `<p>${escapeHtml(`Deadlock episodes per replication: ${intervalText(summary.deadlocks, 2)}; robot-hours lost to them: ${intervalText(summary.deadlockRobotHoursLost, 2)}.`)}${
      summary.livelocks ? escapeHtml(` Livelocks: ${intervalText(summary.livelocks, 2)}.`) : ''
    }${summary.gridlocks ? escapeHtml(` Fleet gridlocks: ${intervalText(summary.gridlocks, 2)}.`) : ''} ${escapeHtml('Record a run (run --record) and open it with fleetwright replay to watch where they happen.')}</p>`,
  );

  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}
