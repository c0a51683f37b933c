/**
 * The report of a fleet-size search (`size --out`: size.json, the `size --json` document
 * of DESIGN §7 with its added fields, and context.json): the recommendation with its
 * reason, the hand formula (Groover) with every term of its cycle time, and one chart of
 * throughput against fleet size that holds both curves a manager compares: the fleets run
 * at the target demand (with their stability) and the capacity curve (saturated demand),
 * each point with its interval, the target line, the hand-formula fleet and the knee.
 */
import { throughputCurve, type CurvePoint } from './charts/throughput-curve.ts';
import { chartFigure, dataTable } from './plot.ts';
import { fixed, intervalText, percent } from './format.ts';
import { cards, facts, heading, provenance, safetyBlock, warnings } from './sections.ts';
import { escapeHtml } from './escape.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

const present = (v: unknown) => v !== null && v !== undefined;

export function sizePage(results: ResultsFolder): { title: string; body: string } {
  const doc = results.document;
  const curve: Json[] = doc.curve ?? [];
  const capacityCurve: Json[] = doc.capacityCurve ?? [];
  const scenarioName = doc.scenario ?? results.context?.scenario?.name ?? 'scenario';
  const title = `Fleet size: ${scenarioName}`;
  const confidence = typeof doc.confidence === 'number' ? doc.confidence : 0.95;
  const level = `${Math.round(confidence * 100)}%`;
  const subtitle = `${doc.policy}, target ${doc.target} tasks/h (${doc.demand ?? 'poisson'} demand)${typeof doc.hours === 'number' ? `, ${doc.replications}+ replications of ${doc.hours} h per fleet` : ''}${present(doc.seed) ? `, seed ${doc.seed}` : ''}`;
  const parts: string[] = [heading(title, subtitle), safetyBlock()];
  const recommended = doc.recommendedRobots;
  const hand = doc.handFormula ?? null;
  const kneeRobots = doc.knee === null || doc.knee === undefined ? null : typeof doc.knee === 'object' ? doc.knee.robots : doc.knee;

  parts.push(
    cards([
      { label: 'Recommended fleet', value: present(recommended) ? String(recommended) : 'none in range', unit: present(recommended) ? `robots: stable at ${doc.target} tasks/h, ${level} interval reaching it` : 'robots', field: 'recommendedRobots' },
      { label: 'Hand formula (Groover)', value: present(doc.handFormulaRobots) ? String(doc.handFormulaRobots) : '–', unit: hand ? `robots (${fixed(hand.robotsExact, 2)} exact), ignoring congestion` : 'robots, ignoring congestion', field: 'handFormulaRobots' },
      {
        label: doc.capacity ? `Capacity of ${doc.capacity.robots} robots` : 'Capacity',
        value: doc.capacity ? fixed(doc.capacity.throughputPerHour?.mean, 0) : '–',
        unit: doc.capacity ? `± ${fixed(doc.capacity.throughputPerHour?.halfWidth, 0)} tasks/h, headroom ${fixed(doc.capacity.headroomPercent, 0)}% over the target` : 'not measured',
        field: 'capacity.throughputPerHour.mean',
      },
      { label: 'Knee of the capacity curve', value: present(kneeRobots) ? String(kneeRobots) : 'not reached', unit: present(kneeRobots) ? 'robots: beyond it each robot adds less than half the first robots’ rate' : `up to ${capacityCurve.length > 0 ? capacityCurve[capacityCurve.length - 1].robots : '–'} robots`, field: 'knee' },
    ]),
  );
  const notes: string[] = [];
  if (doc.reason) notes.push(`No fleet in range meets the target: ${doc.reason}`);
  if (present(doc.congestionFrom)) notes.push(`More robots start to hurt from ${doc.congestionFrom} robots: capacity falls beyond its interval.`);
  parts.push(warnings(notes));
  if (hand) {
    parts.push(
      facts([
        [
          'hand formula',
          `cycle time Tc = ${fixed(hand.loadSeconds, 1)} s load + ${fixed(hand.loadedTravelSeconds, 1)} s loaded travel + ${fixed(hand.unloadSeconds, 1)} s unload + ${fixed(hand.emptyTravelSeconds, 1)} s empty travel = ${fixed(hand.cycleSeconds, 1)} s, so ${fixed(hand.perRobotPerHour, 1)} tasks/h per robot${hand.availability && hand.availability.total < 1 ? ` at availability ${percent(hand.availability.total)} (breakdowns ${percent(hand.availability.breakdowns)}, charging ${percent(hand.availability.charging)})` : ''}; ${doc.target} tasks/h need ${fixed(hand.robotsExact, 2)} robots, ${hand.robots} rounded up (Groover, ch. 10: true shortest-path distances of the layout, mean handling times, no traffic)`,
        ],
        ['lower bound', `${hand.lowerBoundRobots} robots (handling and loaded travel alone): smaller fleets were not run`],
        ...(hand.stationLimit ? ([['busiest station', `${hand.stationLimit.kind} ${hand.stationLimit.cell}: ${percent(hand.stationLimit.share)} of tasks, at most ${fixed(hand.stationLimit.tasksPerHour, 0)} tasks/h whatever the fleet`]] as [string, string][]) : []),
        ['search', `fleets ${doc.range?.min ?? '?'} to ${doc.range?.max ?? '?'} considered; ${doc.replications} replications each, doubled up to ${doc.maxReplications} where a verdict was unsure; ${doc.runs ? `${doc.runs.atTarget} runs at the target, ${doc.runs.capacity} capacity runs` : ''}`],
        ...(present(doc.leadP95LimitSeconds) ? ([['service level', `lead-time p95 at most ${doc.leadP95LimitSeconds} s`]] as [string, string][]) : []),
      ]),
    );
  }

  parts.push('<h2 id="section-curve">Throughput against fleet size</h2>');
  const atTarget = `at ${doc.target} tasks/h offered`;
  const capacityLabel = 'capacity (saturated demand)';
  const points: CurvePoint[] = [
    ...curve.map((c) => ({ x: c.robots, series: atTarget, throughputPerHour: c.throughputPerHour, stable: c.stable })),
    ...capacityCurve.map((c) => ({ x: c.robots, series: capacityLabel, throughputPerHour: c.throughputPerHour, stable: null })),
  ];
  const verticals = [
    ...(present(doc.handFormulaRobots) ? [{ x: doc.handFormulaRobots, label: `hand formula ${doc.handFormulaRobots}`, className: 'mark-hand-formula' }] : []),
    ...(present(kneeRobots) ? [{ x: kneeRobots, label: `knee ${kneeRobots}`, className: 'mark-knee' }] : []),
  ];
  const chart = throughputCurve(points, { xLabel: 'robots', integerX: true, target: doc.target, recommended: present(recommended) ? { x: Number(recommended), series: atTarget } : null, verticals, height: 400 });
  const reading = `Circles: fleets run at the target demand (filled: stable; hollow: the backlog grew); squares: capacity of a fleet under saturated demand, work always waiting. Bars: ${level} intervals. Dashed red line: the target; ring: the recommended fleet; dashed verticals: the hand-formula fleet${present(kneeRobots) ? ' and the knee' : ''}. The gap between the capacity curve and n x ${hand ? fixed(hand.perRobotPerHour, 1) : 'the hand rate'} tasks/h is what congestion and dispatch cost.`;
  const targetTable = dataTable(
    `Fleets evaluated at the target (${level} intervals)`,
    [
      { label: 'robots', value: (c: Json) => c.robots, numeric: true },
      { label: 'reps', value: (c: Json) => c.replications ?? '–', numeric: true },
      { label: 'throughput (tasks/h)', value: (c: Json) => intervalText(c.throughputPerHour, 1), numeric: true },
      { label: 'per robot', value: (c: Json) => fixed(c.throughputPerRobot, 1), numeric: true },
      { label: 'lead mean (s)', value: (c: Json) => (c.stable === false ? `≥ ${fixed(c.leadTimeSeconds?.mean, 0)}` : intervalText(c.leadTimeSeconds, 0)), numeric: true },
      { label: 'lead p95 (s)', value: (c: Json) => (c.stable === false ? `≥ ${fixed(c.leadTimeP95Seconds?.mean, 0)}` : intervalText(c.leadTimeP95Seconds, 0)), numeric: true },
      { label: 'busy robots', value: (c: Json) => fixed(c.busyRobots?.mean, 1), numeric: true },
      { label: 'stable', value: (c: Json) => (c.stable === null || c.stable === undefined ? '–' : c.stable === false ? 'NO' : c.stabilityVerdict === 'undetermined' ? 'undetermined' : 'yes') },
      { label: 'meets target', value: (c: Json) => (c.verdict === 'meets' ? 'yes' : c.verdict === 'fails' ? 'no' : String(c.verdict ?? '–')) },
      { label: 'because', value: (c: Json) => String(c.because ?? '') },
    ],
    curve,
  );
  const capacityTable = dataTable(
    `Capacity, saturated demand (${level} intervals)`,
    [
      { label: 'robots', value: (c: Json) => c.robots, numeric: true },
      { label: 'reps', value: (c: Json) => c.replications ?? '–', numeric: true },
      { label: 'capacity (tasks/h)', value: (c: Json) => intervalText(c.throughputPerHour, 1), numeric: true },
      { label: 'per robot', value: (c: Json) => fixed(c.throughputPerRobot, 1), numeric: true },
      { label: 'per added robot', value: (c: Json) => fixed(c.marginalPerAddedRobot, 1), numeric: true },
    ],
    capacityCurve,
    capacityCurve.length === 0 ? 'No capacity runs (trace demand, or none needed).' : undefined,
  );
  parts.push(chartFigure('fleet-size', 'Throughput against fleet size', reading, chart.svg, `<div class="tables">${targetTable}${capacityTable}</div>`));
  if (curve.length === 0) parts.push(`<p>${escapeHtml('The search ran no fleet at the target (see the reason above).')}</p>`);
  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}
