/**
 * The report of a sweep (`sweep --out`, runs.jsonl of DESIGN §8: one finished run per line
 * with its id, parameters and run summary). Runs with the same parameters (replications)
 * are one point; with several runs per point the interval is Student-t over their means,
 * with one run its own summary interval. Throughput is drawn against the first numeric
 * parameter that varies, one line per combination of the others.
 */
import { intervalOf } from '../stats/index.ts';
import { fleetSizeCurve, type CurvePoint } from './charts/fleet-size-curve.ts';
import { dataTable } from './plot.ts';
import { intervalText } from './format.ts';
import { heading, provenance, safetyBlock } from './sections.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

export function sweepPage(results: ResultsFolder): { title: string; body: string } {
  const runs: Json[] = results.document;
  const parametersOf = (run: Json): Record<string, unknown> => {
    const { replication: _r, ...rest } = (run.parameters ?? {}) as Record<string, unknown>;
    return rest;
  };
  const groups = new Map<string, { parameters: Record<string, unknown>; runs: Json[] }>();
  for (const run of runs) {
    const parameters = parametersOf(run);
    const key = JSON.stringify(Object.keys(parameters).sort().map((k) => [k, parameters[k]]));
    let group = groups.get(key);
    if (!group) groups.set(key, (group = { parameters, runs: [] }));
    group.runs.push(run);
  }
  const names = [...new Set(runs.flatMap((r) => Object.keys(parametersOf(r))))].sort();
  const varying = names.filter((n) => new Set([...groups.values()].map((g) => JSON.stringify(g.parameters[n]))).size > 1);
  const xName = varying.find((n) => [...groups.values()].every((g) => typeof g.parameters[n] === 'number')) ?? null;
  const confidence = runs[0]?.summary?.confidence ?? 0.95;
  const points = [...groups.values()].map((g) => {
    const summaries = g.runs.map((r) => r.summary ?? {});
    const interval = (pick: (s: Json) => Json) =>
      summaries.length > 1 ? intervalOf(summaries.map((s) => pick(s)?.mean).filter((v): v is number => Number.isFinite(v)), confidence) : pick(summaries[0]);
    return {
      parameters: g.parameters,
      runs: g.runs.length,
      throughputPerHour: interval((s) => s.throughputPerHour),
      leadTimeSeconds: interval((s) => s.leadTimeSeconds),
    };
  });
  const scenarioName = runs[0]?.summary?.scenario ?? 'scenario';
  const title = `Sweep: ${scenarioName}`;
  const parts: string[] = [heading(title, `${runs.length} runs at ${groups.size} parameter points; varied: ${varying.join(', ') || 'nothing'}`), safetyBlock()];
  if (xName !== null) {
    const others = varying.filter((n) => n !== xName);
    const curve: CurvePoint[] = points.map((p) => ({
      robots: p.parameters[xName] as number,
      throughputPerHour: p.throughputPerHour,
      leadTimeSeconds: p.leadTimeSeconds,
      series: others.map((n) => `${n}=${String(p.parameters[n])}`).join(', '),
    }));
    parts.push('<h2 id="curve">Throughput across the sweep</h2>');
    parts.push(fleetSizeCurve('sweep-curve', curve, { title: `Throughput against ${xName}`, xLabel: xName }).html);
  }
  parts.push('<h2 id="points">Every parameter point</h2>');
  parts.push(
    dataTable(
      `Parameter points (${Math.round(confidence * 100)}% intervals)`,
      [
        ...varying.map((n) => ({ label: n, value: (p: (typeof points)[number]) => String(p.parameters[n]) })),
        { label: 'runs', value: (p: (typeof points)[number]) => p.runs, numeric: true },
        { label: 'throughput (tasks/h)', value: (p) => intervalText(p.throughputPerHour, 1), numeric: true },
        { label: 'lead time (s)', value: (p) => intervalText(p.leadTimeSeconds, 1), numeric: true },
      ],
      points,
    ),
  );
  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}
