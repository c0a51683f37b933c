/**
 * The report of a fleet-size search (`size --out`, the `size --json` document of DESIGN §7:
 * target, policy, recommendedRobots, reason, handFormulaRobots, knee, curve): the
 * recommendation with its reason, the hand formula beside it, and throughput against fleet
 * size with interval bars and the target line.
 */
import { fleetSizeCurve, type CurvePoint } from './charts/fleet-size-curve.ts';
import { cards, facts, heading, provenance, safetyBlock } from './sections.ts';
import type { Json, ResultsFolder } from './results-folder.ts';

export function sizePage(results: ResultsFolder): { title: string; body: string } {
  const doc = results.document;
  const curve: Json[] = doc.curve ?? [];
  const scenarioName = doc.scenario ?? results.context?.scenario?.name ?? 'scenario';
  const title = `Fleet size: ${scenarioName}`;
  const parts: string[] = [heading(title, `${doc.policy}, target ${doc.target} tasks/h`), safetyBlock()];
  parts.push(
    cards([
      { label: 'Recommended fleet', value: doc.recommendedRobots === null || doc.recommendedRobots === undefined ? 'none in range' : String(doc.recommendedRobots), unit: 'robots', field: 'recommendedRobots' },
      { label: 'Hand formula (Groover)', value: doc.handFormulaRobots === null || doc.handFormulaRobots === undefined ? '–' : String(doc.handFormulaRobots), unit: 'robots, ignoring congestion', field: 'handFormulaRobots' },
      { label: 'Knee of the curve', value: doc.knee === null || doc.knee === undefined ? '–' : String(typeof doc.knee === 'object' ? doc.knee.robots : doc.knee), unit: 'robots', field: 'knee' },
      { label: 'Target', value: String(doc.target), unit: 'tasks/h', field: 'target' },
    ]),
  );
  if (doc.reason) parts.push(facts([['reason', String(doc.reason)]]));
  parts.push('<h2 id="curve">Throughput against fleet size</h2>');
  // The search's verdict (stable, interval not below the target, service level) decides "meets target".
  const points: CurvePoint[] = curve.map((c) => ({ robots: c.robots, throughputPerHour: c.throughputPerHour, leadTimeSeconds: c.leadTimeSeconds, stable: c.stable, verdict: typeof c.verdict === 'string' ? c.verdict : undefined }));
  parts.push(fleetSizeCurve('fleet-size', points, { target: doc.target, recommended: doc.recommendedRobots }).html);
  parts.push(provenance(results.context, results.folder));
  return { title, body: parts.join('\n') };
}
