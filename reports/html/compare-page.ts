/**
 * The report of a policy comparison (`compare --out`): per-policy results with intervals,
 * the paired differences (common random numbers, Bonferroni-adjusted) per metric, robot
 * time, stations, the lead-time distributions and one waiting heatmap per policy on a shared
 * colour scale.
 */
import { floorMap } from './floor-map.ts';
import { chartFigure, dataTable } from './plot.ts';
import { intervalBars } from './charts/interval-bars.ts';
import { differenceChart } from './charts/differences.ts';
import { robotTimeStack } from './charts/robot-time-stack.ts';
import { dropRows, dropStationChart, pickupRows, pickupStationChart } from './charts/station-charts.ts';
import { leadTimeChart } from './charts/lead-time-histogram.ts';
import { policyColours } from './palette.ts';
import { duration, intervalText } from './format.ts';
import { demandText, facts, heading, provenance, safetyBlock, warnings } from './sections.ts';
import { robotTimeLabels, runWarnings } from './run-page.ts';
import { escapeHtml } from './escape.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

const metricViews: Record<string, { title: string; axisLabel: string; digits: number; scale?: number; unit: string }> = {
  throughputPerHour: { title: 'Throughput', axisLabel: 'difference in throughput (tasks/h)', digits: 1, unit: 'tasks/h' },
  leadTimeSeconds: { title: 'Mean lead time', axisLabel: 'difference in mean lead time (s)', digits: 1, unit: 's' },
  leadTimeP95Seconds: { title: '95th percentile of lead time', axisLabel: 'difference in p95 lead time (s)', digits: 1, unit: 's' },
  stationStarvedFraction: { title: 'Stations idle while work waited', axisLabel: 'difference in share of time (percentage points)', digits: 2, scale: 100, unit: 'percentage points' },
  deadlocks: { title: 'Deadlock episodes', axisLabel: 'difference in episodes per replication', digits: 2, unit: 'episodes per replication' },
};

export function comparePage(results: ResultsFolder): { title: string; body: string } {
  const doc = results.document;
  const summaries: Json[] = doc.policies ?? [];
  const first = summaries[0] ?? {};
  const scenario = results.context?.scenario as Json | undefined;
  const cellMeters = scenario?.units?.cellMeters ?? 1;
  const names = summaries.map((s) => String(s.policy));
  const colour = (i: number) => policyColours[i % policyColours.length];
  const title = `Policy comparison: ${first.scenario}`;
  const subtitle = `${names.join(' vs ')}; ${first.robots} robots, ${first.replications} paired replications of ${duration(first.hours * 3600)} on the same tasks (common random numbers), seed ${first.seed}`;
  const parts: string[] = [heading(title, subtitle), safetyBlock()];
  parts.push(warnings(summaries.flatMap((s) => runWarnings(s).map((w) => `${s.policy}: ${w}`))));

  parts.push(
    dataTable(
      `Results per policy (${Math.round(first.confidence * 100)}% intervals)`,
      [
        { label: 'policy', value: (s: Json) => String(s.policy) },
        { label: 'throughput (tasks/h)', value: (s) => intervalText(s.throughputPerHour, 1), numeric: true },
        { label: 'lead time (s)', value: (s) => intervalText(s.leadTimeSeconds, 1), numeric: true },
        { label: 'lead time p95 (s)', value: (s) => intervalText(s.leadTimeP95Seconds, 1), numeric: true },
        { label: 'stations idle while work waited (%)', value: (s) => intervalText(s.stationStarvedFraction, 1, 100), numeric: true },
        { label: 'deadlocks per replication', value: (s) => intervalText(s.deadlocks, 2), numeric: true },
      ],
      summaries,
    ),
  );
  parts.push(
    facts([
      ['demand', demandText(scenario)],
      ['warm-up cut', summaries.map((s) => `${s.policy}: ${duration(s.warmupSeconds ?? 0)}`).join('; ')],
    ]),
  );

  parts.push('<h2 id="section-per-policy">Each policy with its interval</h2>');
  const perPolicy = (id: string, key: string, heading: string, axisLabel: string, digits: number, unit: string, scale = 1) => {
    const chart = intervalBars(
      summaries.map((s, i) => ({ label: String(s.policy), interval: s[key], colour: colour(i) })),
      { axisLabel, caption: heading, digits, unit, scale },
    );
    return chartFigure(id, heading, 'Bar: mean over replications; black bar: its confidence interval. Overlapping intervals do not mean "no difference": the paired differences below answer that.', chart.svg, chart.table);
  };
  parts.push(perPolicy('policy-throughput', 'throughputPerHour', 'Throughput per policy', 'throughput (tasks/h)', 1, 'tasks/h'));
  parts.push(perPolicy('policy-lead-time', 'leadTimeSeconds', 'Mean lead time per policy', 'lead time (s)', 1, 's'));
  parts.push(perPolicy('policy-starved', 'stationStarvedFraction', 'Stations idle while work waited, per policy', 'share of time (%)', 2, '%', 100));

  parts.push('<h2 id="section-differences">Differences between policies</h2>');
  const differences: Json[] = doc.differences ?? [];
  const level = differences[0]?.confidence;
  parts.push(
    `<p>${escapeHtml(
      `Each interval is a paired-t interval on the per-replication differences a − b, at the Bonferroni-adjusted level ${typeof level === 'number' ? `${(level * 100).toFixed(2)}%` : ''} so that all of them hold together at ${Math.round(first.confidence * 100)}%. Filled vermillion: the interval excludes zero (a significant difference).`,
    )}</p>`,
  );
  // Metrics in the order the comparison lists them; one the page has no words for is still drawn, under its field name.
  for (const metric of [...new Set(differences.map((d) => String(d.metric)))]) {
    const view = metricViews[metric] ?? { title: metric, axisLabel: `difference in ${metric}`, digits: 2, unit: metric };
    const rows = differences.filter((d) => d.metric === metric);
    const chart = differenceChart(rows, view);
    const notes = [...new Set(rows.map((d) => d.note).filter((n): n is string => typeof n === 'string' && n.length > 0))];
    parts.push(chartFigure(`difference-${metric}`, `${view.title}: a − b`, `Dot: mean difference; bar: its interval; dashed line: no difference.${notes.length > 0 ? ` ${notes.join(' ')}` : ''}`, chart.svg, chart.table));
  }

  parts.push('<h2 id="section-robot-time">Robot time</h2>');
  const stack = robotTimeStack(summaries, robotTimeLabels);
  parts.push(chartFigure('robot-time', 'How robots spent their time, per policy', 'Mean shares of robot time after the warm-up.', stack.svg, stack.table));

  parts.push('<h2 id="section-stations">Stations</h2>');
  summaries.forEach((s, i) => {
    const pickups = pickupRows(s.stations ?? []);
    const drops = dropRows(s.stations ?? []);
    if (pickups.length > 0) parts.push(pickupStationChart(`stations-${i}`, pickups, `Pickup stations under ${s.policy}`, 'comparison.json').html);
    if (drops.length > 0) parts.push(dropStationChart(`drops-${i}`, drops, `Drops under ${s.policy}`, 'comparison.json').html);
  });

  if (results.leadTimes) {
    parts.push('<h2 id="section-lead-time">Lead time</h2>');
    parts.push(leadTimeChart('lead-time', results.leadTimes, [], true).html);
  }

  if (results.cells) {
    parts.push('<h2 id="section-floor">Where robots waited, per policy</h2>');
    const byPolicy = names.map((name) => results.cells!.filter((c) => c.policy === name));
    const heatMax = Math.max(0, ...results.cells.map((c) => c.waitingSecondsPerHour));
    byPolicy.forEach((cells, i) => {
      if (cells.length === 0) return;
      const map = floorMap(cells, cellMeters, { heatMax });
      parts.push(chartFigure(`floor-${i}`, `Floor under ${names[i]}`, 'Robot-seconds of waiting per simulated hour per cell, on one colour scale for all policies.', map.svg, map.table));
    });
  }
  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}
