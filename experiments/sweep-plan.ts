/**
 * Sweep plans (DESIGN §8): a scenario, a `vary` mapping from dotted scenario paths to lists
 * of values, and a replication count. The plan is the cartesian product of the lists (the
 * first path varies slowest) times the replications; run k is point floor(k / R),
 * replication k mod R. Every point's scenario goes through the scenario loader and the
 * policy's option schema, so a value the scenario file would reject is rejected here with
 * one line naming the sweep file, its line and the value; nothing runs until every point
 * has passed.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { isMap, isSeq, isScalar, LineCounter, parseDocument } from 'yaml';
import type { Scenario } from '../sim/model.ts';
import { InputError } from '../sim/errors.ts';
import { parseScenarioText } from '../scenarios/load.ts';
import { prepareSetup } from './replications.ts';
import { canonicalJson, resultFormat, runId, scenarioKey, sha256 } from './run-id.ts';

export interface SweepVary {
  /** Dotted scenario path, e.g. `fleet.robots`. */
  path: string;
  values: unknown[];
}

export interface SweepPoint {
  index: number;
  /** Dotted path -> value, in the plan's order. */
  parameters: Record<string, unknown>;
  scenario: Scenario;
  /** Hash of the point's scenario content (shared setups in workers). */
  key: string;
}

export interface PlannedRun {
  /** Position in the whole plan: the order of runs.jsonl. */
  index: number;
  id: string;
  point: number;
  replication: number;
}

export interface SweepPlan {
  file: string;
  scenarioPath: string;
  /** The plan's scenario as its file has it, before any `vary` value (context.json). */
  scenario: Scenario;
  vary: SweepVary[];
  replications: number;
  points: SweepPoint[];
  runs: PlannedRun[];
  /** Hash of every run id in order: equal plans (same runs) have equal hashes. */
  hash: string;
}

/** More runs than this in one plan is almost certainly a mistake in the lists. */
export const maxRunsPerPlan = 1_000_000;

const topLevelKeys = ['scenario', 'vary', 'replications'];
const segmentPattern = /^[A-Za-z_][A-Za-z0-9_]*$|^\d+$/;

export function loadSweepPlan(file: string): SweepPlan {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (error) {
    throw new InputError(`${file}: cannot read the sweep file (${(error as NodeJS.ErrnoException).code ?? error}), expected a readable YAML file`);
  }
  const lineCounter = new LineCounter();
  const document = parseDocument(text, { lineCounter, prettyErrors: false, uniqueKeys: true });
  if (document.errors.length > 0) {
    const first = document.errors[0];
    throw new InputError(`${file} (line ${lineCounter.linePos(first.pos[0]).line}): got invalid YAML (${first.message.split('\n')[0]}), expected a sweep plan (scenario, vary, replications)`);
  }
  const root = document.contents;
  const lineOf = (node: unknown): number | null => {
    const range = (node as { range?: [number, number, number] } | null)?.range;
    return range ? lineCounter.linePos(range[0]).line : null;
  };
  const at = (field: string, node: unknown) => {
    const line = lineOf(node);
    return `${file}: ${field}${line === null ? '' : ` (line ${line})`}`;
  };
  if (!isMap(root)) throw new InputError(`${file}: got ${root === null ? 'an empty file' : 'something other than a mapping'}, expected a sweep plan mapping with scenario, vary and replications`);
  const pair = (key: string) => root.items.find((item) => isScalar(item.key) && item.key.value === key);
  for (const item of root.items) {
    const key = isScalar(item.key) ? String(item.key.value) : String(item.key);
    if (!topLevelKeys.includes(key)) throw new InputError(`${at(key, item.key)}: got unknown key ${JSON.stringify(key)}, expected one of ${topLevelKeys.join(', ')}`);
  }
  const raw = document.toJS() as Record<string, unknown>;

  // scenario ---------------------------------------------------------------------------
  const scenarioPair = pair('scenario');
  if (!scenarioPair || typeof raw.scenario !== 'string' || raw.scenario.trim() === '') {
    throw new InputError(`${scenarioPair ? at('scenario', scenarioPair.key) : `${file}: scenario`}: got ${scenarioPair ? JSON.stringify(raw.scenario) : 'nothing'}, expected the path of a scenario YAML file (relative to the sweep file)`);
  }
  const scenarioPath = path.resolve(path.dirname(path.resolve(file)), raw.scenario);
  let scenarioText: string;
  try {
    scenarioText = readFileSync(scenarioPath, 'utf8');
  } catch (error) {
    throw new InputError(`${at('scenario', scenarioPair.key)}: got ${JSON.stringify(raw.scenario)}, expected a readable scenario file (${(error as NodeJS.ErrnoException).code ?? error} for ${scenarioPath})`);
  }
  const scenarioShown = path.relative(process.cwd(), scenarioPath) || scenarioPath;
  const base = parseScenarioText(scenarioText, scenarioShown);

  // replications -------------------------------------------------------------------------
  const replicationsPair = pair('replications');
  let replications = base.run.replications;
  if (replicationsPair) {
    const value = raw.replications;
    if (typeof value !== 'number' || !Number.isSafeInteger(value) || value < 1 || value > 10_000) {
      throw new InputError(`${at('replications', replicationsPair.key)}: got ${JSON.stringify(value)}, expected a whole number of replications from 1 to 10000`);
    }
    replications = value;
  }

  // vary ---------------------------------------------------------------------------------
  const varyPair = pair('vary');
  const vary: SweepVary[] = [];
  const itemLabels: string[][] = [];
  if (varyPair) {
    const node = varyPair.value;
    if (!isMap(node)) throw new InputError(`${at('vary', varyPair.key)}: got ${describe(raw.vary)}, expected a mapping of dotted scenario paths to lists of values`);
    for (const item of node.items) {
      const key = isScalar(item.key) ? String(item.key.value) : String(item.key);
      const label = at(`vary.${key}`, item.key);
      const segments = key.split('.');
      if (key === '' || segments.some((s) => !segmentPattern.test(s))) {
        throw new InputError(`${label}: got the path ${JSON.stringify(key)}, expected a dotted scenario path such as fleet.robots or demand.tasksPerHour`);
      }
      if (key === 'run.replications') throw new InputError(`${label}: got run.replications, expected it as the sweep's own replications: field (every point runs that many)`);
      if (vary.some((v) => v.path === key)) throw new InputError(`${label}: got the path ${JSON.stringify(key)} twice, expected each path once`);
      const values = (raw.vary as Record<string, unknown>)[key];
      if (!Array.isArray(values)) throw new InputError(`${label}: got ${describe(values)}, expected a list of values, e.g. [10, 20, 30]`);
      if (values.length === 0) throw new InputError(`${label}: got an empty list, expected at least one value`);
      const seen = new Set<string>();
      values.forEach((value, i) => {
        const text = canonicalJson(value);
        if (seen.has(text)) throw new InputError(`${at(`vary.${key}[${i}]`, isSeq(item.value) ? item.value.items[i] : item.key)}: got ${describe(value)} twice, expected each value once`);
        seen.add(text);
      });
      vary.push({ path: key, values });
      itemLabels.push(values.map((_, i) => at(`vary.${key}[${i}]`, isSeq(item.value) ? item.value.items[i] : item.key)));
    }
  }
  const pointCount = vary.reduce((n, v) => n * v.values.length, 1);
  if (pointCount * replications > maxRunsPerPlan) {
    throw new InputError(`${file}: got ${pointCount} points x ${replications} replications = ${pointCount * replications} runs, expected at most ${maxRunsPerPlan.toLocaleString('en-US')} runs in one plan`);
  }

  // Points, each validated like a scenario file ----------------------------------------------
  const points: SweepPoint[] = [];
  const choice = new Array<number>(vary.length).fill(0);
  for (let index = 0; index < pointCount; index++) {
    let rest = index;
    for (let v = vary.length - 1; v >= 0; v--) {
      choice[v] = rest % vary[v].values.length;
      rest = Math.floor(rest / vary[v].values.length);
    }
    const parameters: Record<string, unknown> = {};
    const fields = vary.map((v, i) => {
      parameters[v.path] = v.values[choice[i]];
      return { path: v.path.split('.'), value: structuredClone(v.values[choice[i]]), label: itemLabels[i][choice[i]] };
    });
    const scenario = parseScenarioText(scenarioText, scenarioShown, { fields });
    try {
      prepareSetup(scenario);
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      const where = vary.length > 0 ? `${file}: point ${JSON.stringify(parameters)}` : `${file}: scenario`;
      throw new InputError(`${where}: ${error.message.replace(/^[^:]*: policy\.name: /, 'policy.name: ')}`);
    }
    points.push({ index, parameters, scenario, key: scenarioKey(scenario) });
  }

  const runs: PlannedRun[] = [];
  const ids = new Map<string, number>();
  for (const point of points) {
    for (let replication = 0; replication < replications; replication++) {
      const id = runId(point.scenario, replication);
      const earlier = ids.get(id);
      if (earlier !== undefined) {
        throw new InputError(`${file}: points ${JSON.stringify(points[runs[earlier].point].parameters)} and ${JSON.stringify(point.parameters)} simulate the same thing, expected every point to differ`);
      }
      ids.set(id, runs.length);
      runs.push({ index: runs.length, id, point: point.index, replication });
    }
  }
  const hash = sha256(canonicalJson({ resultFormat, runs: runs.map((r) => r.id), vary: vary.map((v) => v.path) }));
  return { file, scenarioPath, scenario: base, vary, replications, points, runs, hash };
}

function describe(value: unknown): string {
  if (value === undefined || value === null) return 'nothing';
  if (typeof value === 'string') return JSON.stringify(value);
  const text = JSON.stringify(value);
  return text.length > 60 ? `${text.slice(0, 57)}...` : text;
}
