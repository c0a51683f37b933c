/**
 * The report of a sweep (`sweep --out`: runs.jsonl of DESIGN §8, one finished run per line,
 * and context.json). Runs are grouped into their parameter points and summarized by
 * reports/sweep-point.ts, the same code that writes summary.csv, so the page and the file
 * show the same intervals and stability verdicts.
 *
 * The chart follows what the plan varies: throughput against robots when it varies
 * `fleet.robots` (one line per combination of the other parameters); against offered
 * demand, with the offered = delivered line, when it varies `demand.tasksPerHour` but not
 * the fleet; against the first other numeric parameter otherwise; and one bar per point
 * when nothing numeric varies. Unstable points (backlog grew) are hollow, flagged in the
 * table, and their lead times shown as lower bounds without an interval.
 */
import { sweepPoints, type PointSummary, type RunLine } from '../sweep-point.ts';
import { throughputCurve, type CurvePoint } from './charts/throughput-curve.ts';
import { leadTimeCurve } from './charts/lead-time-curve.ts';
import { intervalBars } from './charts/interval-bars.ts';
import { chartFigure, dataTable } from './plot.ts';
import { duration, fixed, intervalText } from './format.ts';
import { demandText, facts, heading, provenance, safetyBlock, warnings } from './sections.ts';
import { policyColours } from './palette.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

/** A parameter value in words: `token-passing`, `800 tasks/h`, `20 robots`, or `path=value`. */
export function parameterText(name: string, value: unknown): string {
  const text = typeof value === 'string' ? value : JSON.stringify(value);
  if (name === 'policy.name') return text;
  if (name === 'fleet.robots') return `${text} robots`;
  if (name === 'demand.tasksPerHour') return `${text} tasks/h`;
  return `${name}=${text}`;
}

const axisLabels: Record<string, string> = { 'fleet.robots': 'robots', 'demand.tasksPerHour': 'offered demand (tasks/h)' };

/** How the page says a point's lead time: an interval, or a lower bound at an unstable point. */
export function leadText(point: PointSummary, name: string): string {
  const interval = point.figures[name];
  if (!interval) return '–';
  return point.leadTimeIsLowerBound ? `≥ ${fixed(interval.mean, 1)} (lower bound)` : intervalText(interval, 1);
}

export function stableText(point: PointSummary): string {
  if (point.stable === null) return '–';
  const judged = point.stableShare === null ? '' : ` (${Math.round(point.stableShare * point.replications)} of ${point.replications} stable alone)`;
  const verdict = point.stable === false ? 'NO: backlog grew' : point.stabilityVerdict === 'undetermined' ? 'undetermined: growth interval too wide' : 'yes';
  return `${verdict}${judged}`;
}

/** The short flag of the point table. */
function stableFlag(point: PointSummary): string {
  if (point.stable === null) return '–';
  return point.stable === false ? 'NO' : point.stabilityVerdict === 'undetermined' ? 'undetermined' : 'yes';
}

export function sweepPage(results: ResultsFolder): { title: string; body: string } {
  const lines: RunLine[] = results.document;
  const context = results.context as Json | null;
  const confidence = lines[0]?.summary?.confidence ?? 0.95;
  const points = sweepPoints(lines, confidence);
  // Varied paths in the plan's order (context.json), else in the run lines' order.
  const names: string[] = Array.isArray(context?.vary) ? context.vary : [...new Set(lines.flatMap((l) => Object.keys(l.parameters ?? {}).filter((k) => k !== 'replication')))];
  const varying = names.filter((n) => new Set(points.map((p) => JSON.stringify(p.parameters[n]))).size > 1);
  const numeric = varying.filter((n) => points.every((p) => typeof p.parameters[n] === 'number'));
  const xName = numeric.includes('fleet.robots') ? 'fleet.robots' : numeric.includes('demand.tasksPerHour') ? 'demand.tasksPerHour' : (numeric[0] ?? null);
  const others = varying.filter((n) => n !== xName);
  const seriesOf = (p: PointSummary) => others.map((n) => parameterText(n, p.parameters[n])).join(', ');
  const pointLabel = (p: PointSummary) => varying.map((n) => parameterText(n, p.parameters[n])).join(', ') || 'the one point';

  const scenarioName = points[0]?.scenario ?? context?.scenario?.name ?? 'scenario';
  const hours = lines[0]?.summary?.hours;
  const replications = Math.max(0, ...points.map((p) => p.replications));
  const title = `Sweep: ${scenarioName}`;
  const subtitle = `${lines.length} runs at ${points.length} parameter points (${replications} replication${replications === 1 ? '' : 's'} each${typeof hours === 'number' ? ` of ${duration(hours * 3600)}` : ''}); varied: ${varying.join(', ') || 'nothing'}`;
  const parts: string[] = [heading(title, subtitle), safetyBlock()];

  const unstable = points.filter((p) => p.stable === false);
  const notes: string[] = [];
  const collisions = points.reduce((s, p) => s + p.collisions, 0);
  if (collisions > 0) notes.push(`The collision validator counted ${collisions} collisions: the policy is defective and these numbers are not valid.`);
  if (unstable.length > 0) {
    notes.push(
      `${unstable.length} of ${points.length} points are not stable (the backlog grew: demand above what the fleet delivers): drawn hollow, their lead times are lower bounds without an interval, and their throughput is what the fleet managed, not the demand served. ${unstable.map(pointLabel).join('; ')}.`,
    );
  }
  if (typeof context?.runs === 'number' && context.runs > lines.length) notes.push(`This folder holds ${lines.length} of the plan's ${context.runs} runs (a shard, or a partial merge).`);
  parts.push(warnings(notes));
  parts.push(
    facts([
      ['plan', context?.sweepFile ? `${context.sweepFile} (${context.runs ?? lines.length} runs${context.shard ? `, shard ${context.shard.index} of ${context.shard.count}` : ''})` : 'unknown (no context.json)'],
      ['varied', varying.map((n) => `${n}: ${[...new Set(points.map((p) => JSON.stringify(p.parameters[n])))].join(', ')}`).join('; ') || 'nothing'],
      ['scenario', `${scenarioName}; ${demandText(context?.scenario)} in the file, before the plan's values`],
      ['intervals', `${Math.round(confidence * 100)}%, Student t over each point's replications (one replication: batch means of the run), clipped to what each figure can take`],
    ]),
  );

  parts.push('<h2 id="section-curve">Throughput across the sweep</h2>');
  if (xName !== null) {
    const curvePoints: CurvePoint[] = points.map((p) => ({ x: p.parameters[xName] as number, series: seriesOf(p), throughputPerHour: p.figures.throughputPerHour ?? { mean: null, halfWidth: null }, stable: p.stable }));
    const chart = throughputCurve(curvePoints, { xLabel: axisLabels[xName] ?? xName, integerX: xName === 'fleet.robots', offeredLine: xName === 'demand.tasksPerHour' });
    const reading = `Symbol: mean throughput over the point's replications (filled: stable; hollow: the backlog grew); vertical bar: its ${Math.round(confidence * 100)}% interval${others.length > 0 ? `; one line per ${others.join(' and ')}` : ''}${xName === 'demand.tasksPerHour' ? '; dotted diagonal: offered = delivered, where a fleet that keeps up lies' : ''}. ${xName === 'fleet.robots' ? 'The curve flattens where robots start to get in each other’s way.' : ''}`;
    parts.push(chartFigure('sweep-curve', `Throughput against ${axisLabels[xName] ?? xName}`, reading, chart.svg, pointTable(points, varying, confidence, 'Throughput per point')));
    const lead = leadTimeCurve(points.map((p) => ({ x: p.parameters[xName] as number, series: seriesOf(p), lead: p.figures.leadTimeSeconds, lowerBound: p.leadTimeIsLowerBound })), { xLabel: axisLabels[xName] ?? xName, integerX: xName === 'fleet.robots' });
    if (lead.points > 0) {
      parts.push(
        chartFigure(
          'sweep-lead-time',
          `Mean lead time against ${axisLabels[xName] ?? xName}`,
          'Filled symbol and bar: mean lead time (release to delivery) with its interval at a stable point. Hollow symbol with an arrow up: a lower bound at an unstable point (tasks still waiting at the end count with their age so far), with no interval; one above the scale sits on the top edge with its value written beside it.',
          lead.svg,
          dataTable(
            'Lead time per point',
            [
              ...varying.map((n) => ({ label: n, value: (p: PointSummary) => String(p.parameters[n]) })),
              { label: 'lead time mean (s)', value: (p: PointSummary) => leadText(p, 'leadTimeSeconds'), numeric: true },
              { label: 'p95 (s)', value: (p: PointSummary) => leadText(p, 'leadTimeP95Seconds'), numeric: true },
            ],
            points,
          ),
        ),
      );
    }
  } else {
    const bars = intervalBars(
      points.map((p, i) => ({ label: pointLabel(p), interval: p.figures.throughputPerHour ?? { mean: null, halfWidth: null }, colour: policyColours[i % policyColours.length] })),
      { axisLabel: 'throughput (tasks/h)', caption: 'Throughput per point', digits: 1, unit: 'tasks/h', marginLeft: 220 },
    );
    parts.push(chartFigure('sweep-bars', 'Throughput per point', 'Bar: mean throughput over the point’s replications; black bar: its interval.', bars.svg, pointTable(points, varying, confidence, 'Throughput per point')));
  }

  parts.push('<h2 id="section-points">Every parameter point</h2>');
  parts.push(
    dataTable(
      `Parameter points (${Math.round(confidence * 100)}% intervals; summary.csv holds every figure)`,
      [
        ...varying.map((n) => ({ label: n, value: (p: PointSummary) => String(p.parameters[n]) })),
        { label: 'stable', value: stableFlag },
        { label: 'backlog growth (tasks/h)', value: (p: PointSummary) => intervalText(p.figures.backlogGrowthPerHour, 1), numeric: true },
        { label: 'busy robots', value: (p: PointSummary) => intervalText(p.figures.busyRobots, 1), numeric: true },
        { label: 'no robot while work waits (%)', value: (p: PointSummary) => intervalText(p.figures.stationStarvedFraction, 1, 100), numeric: true },
        { label: 'deadlocks per replication', value: (p: PointSummary) => intervalText(p.figures.deadlocks, 2), numeric: true },
      ],
      points,
      'Stable: the backlog of released, undelivered tasks did not grow (the run summary’s test over the point’s replications); undetermined: its growth interval is too wide to show that (more replications or longer runs decide). No robot while work waits: the share of time pickup stations stood idle with work waiting and no robot assigned to it.',
    ),
  );
  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}

/** The table under the throughput chart: one row per point with its flags. */
function pointTable(points: PointSummary[], varying: string[], confidence: number, caption: string): string {
  return dataTable(
    `${caption} (${Math.round(confidence * 100)}% intervals)`,
    [
      ...varying.map((n) => ({ label: n, value: (p: PointSummary) => String(p.parameters[n]) })),
      { label: 'replications', value: (p: PointSummary) => p.replications, numeric: true },
      { label: 'throughput (tasks/h)', value: (p: PointSummary) => intervalText(p.figures.throughputPerHour, 1), numeric: true },
      { label: 'lead time (s)', value: (p: PointSummary) => leadText(p, 'leadTimeSeconds'), numeric: true },
      { label: 'stable', value: (p: PointSummary) => stableText(p) },
    ],
    points,
  );
}
