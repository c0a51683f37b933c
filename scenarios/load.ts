/**
 * Scenario loader: the YAML scenario file of DESIGN §3 (a contract) -> the normalized
 * Scenario of sim/model.ts.
 *
 * Stages, each failing with one InputError whose message is a single line of the form
 * `<file>: <dotted.field> (line N): got <bad value>, expected <what>`:
 *   1. text: not empty, not binary, valid YAML (the parser's line), a mapping at the top;
 *   2. command-line overrides merged into the raw tree (they are then checked by the same
 *      rules as file fields and named by their option, e.g. `--robots`);
 *   3. shape and ranges, by zod strict schemas (unknown keys are rejected);
 *   4. meaning against the layout: points present, all endpoints in one connected area,
 *      robots <= passable cells, weight keys and trace rows naming the right kind of cell.
 * Well-formedness (DESIGN §2) is deliberately not checked here: `check` reports it.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { isMap, isScalar, isSeq, LineCounter, parseDocument, type Document } from 'yaml';
import { z } from 'zod';
import { InputError } from '../sim/errors.ts';
import { CellKind, cellLabel, componentLabels, describeCell, isEndpointKind, LayoutError, parseCellLabel, parseLayout, type Layout } from '../sim/layout.ts';
import { defaultBattery, defaultRun, type BatterySpec, type BreakdownSpec, type DelaySpec, type DemandMode, type DemandSpec, type HandlingSpec, type PointChoice, type Scenario, type StationHandling, type TraceTask } from '../sim/model.ts';

/** Command-line options that override scenario fields (DESIGN §7). */
export interface ScenarioOverrides {
  robots?: number;
  policy?: string;
  hours?: number;
  replications?: number;
  seed?: number;
  tasksPerHour?: number;
  /** Trace CSV path, relative to the current directory (not the scenario's folder). */
  trace?: string;
  warmup?: 'auto' | number;
  /**
   * Any field by its path (a sweep's `vary`), applied after the options above and checked
   * like a file field. `label` replaces `<file>: <field>` in messages (e.g. the sweep file
   * and line that set it).
   */
  fields?: { path: string[]; value: unknown; label: string }[];
}

/** Reads and validates a scenario file. Every failure is an InputError with a one-line message. */
export function loadScenarioFile(filePath: string, overrides?: ScenarioOverrides): Scenario {
  let bytes: Buffer;
  try {
    bytes = readFileSync(filePath);
  } catch (error) {
    throw new InputError(`${filePath}: cannot read the scenario file (${errorCode(error)}), expected a readable YAML file`);
  }
  const nul = bytes.indexOf(0);
  if (nul >= 0) {
    throw new InputError(`${filePath}: got binary data (a NUL byte at offset ${nul}), expected a YAML text file`);
  }
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw new InputError(`${filePath}: got bytes that are not UTF-8 text, expected a YAML text file`);
  }
  return parseScenarioText(text, filePath, overrides);
}

/**
 * Validates scenario YAML text. `sourcePath` names the file in messages and anchors a
 * relative trace path; with null, messages say `scenario` and the trace path is relative
 * to the current directory.
 */
export function parseScenarioText(text: string, sourcePath: string | null, overrides: ScenarioOverrides = {}): Scenario {
  const file = sourcePath ?? 'scenario';
  const cwd = process.cwd();
  const absoluteSource = sourcePath === null ? null : path.resolve(cwd, sourcePath);

  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const nul = text.indexOf('\u0000');
  if (nul >= 0) {
    throw new InputError(`${file}: got binary data (a NUL character at line ${lineOfOffset(text, nul)}), expected a YAML text file`);
  }
  const lineCounter = new LineCounter();
  const document = parseDocument(text, { lineCounter, prettyErrors: false, uniqueKeys: true });
  if (document.errors.length > 0) {
    const first = document.errors[0];
    const line = lineCounter.linePos(first.pos[0]).line;
    throw new InputError(`${file} (line ${line}): got invalid YAML (${oneLine(first.message)}), expected a YAML mapping of scenario fields`);
  }
  if (document.contents === null || (isScalar(document.contents) && document.contents.value === null)) {
    throw new InputError(`${file}: got an empty file, expected a YAML mapping with at least layout, fleet and demand`);
  }
  let raw: unknown;
  try {
    raw = document.toJS({ maxAliasCount: 100 });
  } catch (error) {
    throw new InputError(`${file}: got YAML that cannot be read (${oneLine(error instanceof Error ? error.message : String(error))}), expected a plain YAML mapping`);
  }
  if (!isPlainObject(raw)) {
    throw new InputError(
      `${file} (line ${lineOfNode(document.contents, lineCounter) ?? 1}): got ${describeValue(raw)} at the top level, expected a mapping of scenario fields (${Object.keys(scenarioShape).join(', ')})`,
    );
  }

  const context: Context = { file, document, lineCounter, optionOfPath: new Map(), raw };
  const traceFromOption = applyOverrides(raw, overrides, context);

  const parsed = scenarioSchema.safeParse(raw, { error: fallbackExpectation });
  if (!parsed.success) throw new InputError(formatProblem(pickProblem(collectProblems(parsed.error.issues, []), context), context));
  const fields = parsed.data;

  const layout = loadLayout(fields.layout, context);
  const mode: DemandMode = fields.demand.mode ?? 'delivery';
  checkLayoutForDemand(layout, mode, context);
  const robots = fields.fleet.robots;
  if (robots > layout.floorCells.length) {
    fail(context, ['fleet', 'robots'], `got ${robots}, expected at most ${layout.floorCells.length} (the passable cells of the layout)`);
  }

  const traceBase = traceFromOption ? cwd : absoluteSource === null ? cwd : path.dirname(absoluteSource);
  const demand = normalizeDemand(fields.demand, mode, layout, traceBase, context);
  const { name: policyName, ...policyOptions } = fields.policy;
  const run = fields.run ?? {};
  const handling = fields.handling ?? {};
  checkRunSize(demand, run.hours ?? defaultRun.hours, run.sampleSeconds ?? defaultRun.sampleSeconds, layout, context);
  const stations = normalizeStationHandling(handling, mode, layout, context);
  const battery = fields.fleet.battery === undefined ? undefined : normalizeBattery(fields.fleet.battery, layout, context);
  const breakdowns = fields.faults?.breakdowns === undefined ? undefined : normalizeBreakdowns(fields.faults.breakdowns);
  const delays = fields.faults?.delays === undefined ? undefined : toDelaySpec(fields.faults.delays);
  return {
    name: fields.name ?? (sourcePath === null ? 'scenario' : path.basename(sourcePath).replace(/\.ya?ml$/i, '')),
    sourcePath: absoluteSource,
    units: {
      cellMeters: fields.units?.cellMeters ?? 1,
      robotSpeedMps: fields.units?.robotSpeedMps ?? 1,
      // Kept only when given, so scenarios without it hash and echo exactly as before.
      ...(fields.units?.turnSeconds === undefined ? {} : { turnSeconds: fields.units.turnSeconds }),
    },
    layoutText: fields.layout,
    handling: {
      pickupSeconds: toHandlingSpec(handling.pickupSeconds),
      dropSeconds: toHandlingSpec(handling.dropSeconds),
      ...(stations === undefined ? {} : { stations }),
    },
    fleet: { robots, ...(battery === undefined ? {} : { battery }) },
    ...(breakdowns === undefined && delays === undefined ? {} : { faults: { ...(breakdowns === undefined ? {} : { breakdowns }), ...(delays === undefined ? {} : { delays }) } }),
    demand,
    policy: { name: policyName, options: policyOptions },
    run: {
      hours: run.hours ?? defaultRun.hours,
      warmup: run.warmup ?? defaultRun.warmup,
      replications: run.replications ?? defaultRun.replications,
      seed: run.seed ?? defaultRun.seed,
      confidence: run.confidence ?? defaultRun.confidence,
      sampleSeconds: run.sampleSeconds ?? defaultRun.sampleSeconds,
      deadlockSeconds: run.deadlockSeconds ?? defaultRun.deadlockSeconds,
      recoverySeconds: run.recoverySeconds ?? defaultRun.recoverySeconds,
    },
  };
}

// ---------------------------------------------------------------------------------------
// Schema. Every leaf carries its own "expected ..." text; refinements (code `custom`) are
// used instead of zod's built-in checks so that each message reads the same way.

/** A finite number passing `accept`; `expected` is the text after "expected". */
function numberWhere(expected: string, accept: (value: number) => boolean) {
  return z.number({ error: expected }).refine(accept, { error: expected });
}
const positiveNumber = (expected: string) => numberWhere(expected, (v) => v > 0);
const nonNegativeNumber = (expected: string) => numberWhere(expected, (v) => v >= 0);
const positiveInteger = (expected: string) => numberWhere(expected, (v) => Number.isSafeInteger(v) && v > 0);

/** A strict mapping: unknown keys are rejected with the list of allowed ones. */
function strict<T extends z.core.$ZodLooseShape>(shape: T, what: string, note = '') {
  const allowed = Object.keys(shape).join(', ');
  return z.strictObject(shape, {
    error: (issue) => (issue.code === 'unrecognized_keys' ? `one of ${allowed}${note}` : what),
  });
}

/**
 * A duration in seconds: a number, or {dist: fixed, seconds}, {dist: uniform, min, max},
 * {dist: exponential, mean}. `bound` says whether 0 is allowed (handling: >= 0) or not
 * (a delay of nothing is no delay: > 0); a uniform's min may be 0 either way.
 */
function secondsSpecSchema(bound: '>= 0' | '> 0') {
  const seconds = (expected: string) => (bound === '>= 0' ? nonNegativeNumber(expected) : positiveNumber(expected));
  const text = `a number of seconds ${bound}`;
  return z.union(
    [
      seconds(text),
      z.discriminatedUnion(
        'dist',
        [
          strict({ dist: z.literal('fixed'), seconds: seconds(text) }, 'a mapping', ' (for dist: fixed)'),
          strict({ dist: z.literal('uniform'), min: nonNegativeNumber('a number of seconds >= 0'), max: seconds(text) }, 'a mapping', ' (for dist: uniform)').superRefine(
            (value, context) => {
              if (value.min > value.max) {
                context.addIssue({ code: 'custom', path: ['max'], message: `a number of seconds >= min (${value.min})`, input: value.max });
              }
            },
          ),
          strict({ dist: z.literal('exponential'), mean: positiveNumber('a mean in seconds > 0') }, 'a mapping', ' (for dist: exponential)'),
        ],
        { error: 'dist: fixed, uniform or exponential' },
      ),
    ],
    { error: `${text}, or {dist: uniform, min, max}, {dist: exponential, mean} or {dist: fixed, seconds}` },
  );
}

const handlingSecondsSchema = secondsSpecSchema('>= 0');

/**
 * A duration in the field's own unit (`unit`: hours or minutes): a number is the mean of an
 * exponential distribution (the reliability convention), or {dist: exponential, mean},
 * {dist: uniform, min, max} or {dist: fixed, <unit>}.
 */
function durationSchema(unit: 'hours' | 'minutes') {
  const mean = positiveNumber(`a mean in ${unit} > 0`);
  return z.union(
    [
      mean,
      z.discriminatedUnion(
        'dist',
        [
          strict({ dist: z.literal('exponential'), mean }, 'a mapping', ' (for dist: exponential)'),
          strict({ dist: z.literal('uniform'), min: nonNegativeNumber(`a number of ${unit} >= 0`), max: positiveNumber(`a number of ${unit} > 0`) }, 'a mapping', ' (for dist: uniform)').superRefine(
            (value, context) => {
              if (value.min > value.max) context.addIssue({ code: 'custom', path: ['max'], message: `a number of ${unit} >= min (${value.min})`, input: value.max });
            },
          ),
          unit === 'hours'
            ? strict({ dist: z.literal('fixed'), hours: positiveNumber('a number of hours > 0') }, 'a mapping', ' (for dist: fixed)')
            : strict({ dist: z.literal('fixed'), minutes: positiveNumber('a number of minutes > 0') }, 'a mapping', ' (for dist: fixed)'),
        ],
        { error: 'dist: exponential, uniform or fixed' },
      ),
    ],
    { error: `a mean in ${unit} > 0 (exponential), or {dist: exponential, mean}, {dist: uniform, min, max} or {dist: fixed, ${unit}}` },
  );
}

const fraction = (expected: string) => numberWhere(expected, (v) => v > 0 && v <= 1);

const batterySchema = strict(
  {
    runHours: positiveNumber('hours of operation on a full charge > 0'),
    chargeHours: positiveNumber('hours to charge from empty to full > 0'),
    chargeBelow: numberWhere('a charge fraction > 0 and < 1', (v) => v > 0 && v < 1).optional(),
    chargeUpTo: fraction('a charge fraction > 0 and <= 1').optional(),
  },
  'a mapping {runHours, chargeHours, chargeBelow, chargeUpTo}',
).superRefine((battery, context) => {
  const below = battery.chargeBelow ?? defaultBattery.chargeBelow;
  const upTo = battery.chargeUpTo ?? defaultBattery.chargeUpTo;
  if (upTo <= below) {
    const field = battery.chargeUpTo !== undefined ? 'chargeUpTo' : 'chargeBelow';
    const message = field === 'chargeUpTo' ? `a charge fraction > chargeBelow (${below}) and <= 1` : `a charge fraction > 0 and < chargeUpTo (${upTo})`;
    context.addIssue({ code: 'custom', path: [field], message, input: battery[field] });
  }
});

const breakdownsSchema = strict({ mtbfHours: durationSchema('hours'), mttrMinutes: durationSchema('minutes') }, 'a mapping {mtbfHours, mttrMinutes}');

const stationHandlingSchema = strict(
  { pickupSeconds: handlingSecondsSchema.optional(), dropSeconds: handlingSecondsSchema.optional() },
  'a mapping {pickupSeconds, dropSeconds}',
).superRefine((value, context) => {
  if (value.pickupSeconds === undefined && value.dropSeconds === undefined) {
    context.addIssue({ code: 'custom', path: [], message: 'a mapping with pickupSeconds or dropSeconds (or both)', input: value });
  }
});

const handlingSchema = strict(
  {
    pickupSeconds: handlingSecondsSchema.optional(),
    dropSeconds: handlingSecondsSchema.optional(),
    groups: z
      .record(z.string(), z.array(z.string({ error: 'a station cell written "x:y"' }), { error: 'a list of station cells "x:y"' }), {
        error: 'a mapping of group names to lists of station cells "x:y"',
      })
      .optional(),
    stations: z.record(z.string(), stationHandlingSchema, { error: 'a mapping of station cells "x:y" or group names to {pickupSeconds, dropSeconds}' }).optional(),
  },
  'a mapping {pickupSeconds, dropSeconds, groups, stations}',
);

/** A delay in seconds: like a handling time, but with a positive mean (a delay of nothing is no delay). */
const delaySecondsSchema = secondsSpecSchema('> 0');

const delaysSchema = strict(
  {
    probabilityPerMove: numberWhere('a probability >= 0 and < 1 (the chance that a move is held back)', (v) => v >= 0 && v < 1),
    seconds: delaySecondsSchema,
  },
  'a mapping {probabilityPerMove, seconds}',
);

const faultsSchema = strict({ breakdowns: breakdownsSchema.optional(), delays: delaysSchema.optional() }, 'a mapping {breakdowns, delays}');

const weightsSchema = z
  .record(z.string(), nonNegativeNumber('a weight >= 0'), { error: 'a mapping of cells "x:y" to weights >= 0' })
  .superRefine((weights, context) => {
    const total = Object.values(weights).reduce((sum, weight) => sum + weight, 0);
    if (!(total > 0)) context.addIssue({ code: 'custom', path: [], message: 'weights with a positive sum', input: weights });
  });

const pickupsSchema = z.union([z.literal('uniform'), strict({ weights: weightsSchema }, 'a mapping {weights: {...}}')], {
  error: 'uniform or {weights: {"x:y": weight}}',
});

const dropsSchema = z.union(
  [
    z.literal('uniform'),
    strict({ skew: nonNegativeNumber('a Zipf exponent >= 0').optional(), weights: weightsSchema.optional() }, 'a mapping').superRefine(
      (value, context) => {
        if ((value.skew === undefined) === (value.weights === undefined)) {
          context.addIssue({ code: 'custom', path: [], message: 'exactly one of skew or weights', input: value });
        }
      },
    ),
  ],
  { error: 'uniform, {skew: s >= 0} or {weights: {"x:y": weight}}' },
);

const profileSchema = z.array(nonNegativeNumber('an hourly multiplier >= 0'), { error: 'a list of hourly multipliers' }).superRefine((profile, context) => {
  if (!profile.some((multiplier) => multiplier > 0)) {
    context.addIssue({ code: 'custom', path: [], message: 'a non-empty list of hourly multipliers with at least one > 0', input: profile });
  }
});

const modeSchema = z.enum(['delivery', 'round-trip'], { error: 'delivery or round-trip' }).optional();

const demandSchema = z.discriminatedUnion(
  'kind',
  [
    strict(
      {
        kind: z.literal('poisson'),
        mode: modeSchema,
        tasksPerHour: positiveNumber('tasks per hour > 0'),
        profile: profileSchema.optional(),
        pickups: pickupsSchema.optional(),
        drops: dropsSchema.optional(),
      },
      'a mapping',
      ' (for kind: poisson)',
    ),
    strict(
      { kind: z.literal('saturated'), mode: modeSchema, pickups: pickupsSchema.optional(), drops: dropsSchema.optional() },
      'a mapping',
      ' (for kind: saturated)',
    ),
    strict(
      { kind: z.literal('trace'), mode: modeSchema, trace: z.string({ error: 'a CSV file path' }).refine((v) => v.trim() !== '', { error: 'a CSV file path' }) },
      'a mapping',
      ' (for kind: trace)',
    ),
  ],
  {
    error: (issue) => ((issue.code as string) === 'invalid_type' ? 'a mapping with kind: poisson, saturated or trace' : 'poisson, saturated or trace'),
  },
);

const runSchema = strict(
  {
    hours: positiveNumber('a number of hours > 0').optional(),
    warmup: z.union([z.literal('auto'), nonNegativeNumber('auto or a number of hours >= 0')], { error: 'auto or a number of hours >= 0' }).optional(),
    replications: positiveInteger('a positive integer').optional(),
    seed: numberWhere('a non-negative integer', (v) => Number.isSafeInteger(v) && v >= 0).optional(),
    confidence: numberWhere('a number between 0 and 1 (exclusive), e.g. 0.95', (v) => v > 0 && v < 1).optional(),
    sampleSeconds: positiveNumber('a number of seconds > 0').optional(),
    deadlockSeconds: positiveNumber('a number of seconds > 0').optional(),
    recoverySeconds: nonNegativeNumber('a number of seconds >= 0').optional(),
  },
  'a mapping',
)
  .superRefine((run, context) => {
    const hours = run.hours ?? defaultRun.hours;
    if (typeof run.warmup === 'number' && run.warmup >= hours) {
      context.addIssue({ code: 'custom', path: ['warmup'], message: `auto or a number of hours >= 0 and < run.hours (${hours})`, input: run.warmup });
    }
    // A sample longer than the run leaves no series to cut a warm-up from or to batch.
    const sampleSeconds = run.sampleSeconds ?? defaultRun.sampleSeconds;
    if (sampleSeconds > hours * 3600) {
      if (run.sampleSeconds !== undefined) {
        context.addIssue({ code: 'custom', path: ['sampleSeconds'], message: `a number of seconds > 0 and at most the run's length (run.hours ${hours} = ${hours * 3600} s)`, input: run.sampleSeconds });
      } else {
        context.addIssue({ code: 'custom', path: ['hours'], message: `a run at least as long as one metric sample (run.sampleSeconds, default ${sampleSeconds} s = ${Number((sampleSeconds / 3600).toPrecision(3))} h)`, input: hours });
      }
    }
  });

const scenarioShape = {
  name: z.string({ error: 'text' }).optional(),
  units: strict(
    {
      cellMeters: positiveNumber('a cell size in meters > 0').optional(),
      robotSpeedMps: positiveNumber('a speed in meters per second > 0').optional(),
      turnSeconds: nonNegativeNumber('a number of seconds >= 0 (a 90-degree turn in place; 0: no turning time)').optional(),
    },
    'a mapping {cellMeters, robotSpeedMps, turnSeconds}',
  ).optional(),
  layout: z
    .string({ error: 'the floor as text rows of the characters .#PDSHC (a block: layout: |)' })
    .refine((v) => v.trim() !== '', { error: 'the floor as text rows (a block: layout: |)' }),
  handling: handlingSchema.optional(),
  fleet: strict({ robots: positiveInteger('a positive integer (the number of robots)'), battery: batterySchema.optional() }, 'a mapping {robots, battery}'),
  demand: demandSchema,
  policy: z
    .looseObject(
      { name: z.string({ error: 'a policy name' }).refine((v) => v.trim() !== '', { error: 'a policy name' }) },
      { error: 'a mapping {name: <policy>, ...options}' },
    )
    .optional()
    .default({ name: 'token-passing' }),
  run: runSchema.optional(),
  faults: faultsSchema.optional(),
};
const scenarioSchema = strict(scenarioShape, 'a mapping of scenario fields');

type ParsedScenario = z.output<typeof scenarioSchema>;
type ParsedHandling = z.output<typeof handlingSecondsSchema> | undefined;
type ParsedScenarioHandling = z.output<typeof handlingSchema>;
type ParsedPickups = z.output<typeof pickupsSchema> | undefined;
type ParsedDrops = z.output<typeof dropsSchema> | undefined;

/** The "expected" text for issues a schema leaf did not word itself. */
function fallbackExpectation(issue: z.core.$ZodRawIssue): string {
  switch (issue.code) {
    case 'invalid_type':
      return issue.expected === 'object' ? 'a mapping' : issue.expected === 'array' ? 'a list' : `a ${issue.expected}`;
    case 'invalid_value':
      return `one of ${issue.values.map((v) => JSON.stringify(v)).join(', ')}`;
    case 'unrecognized_keys':
      return 'no other keys';
    default:
      return 'a valid value';
  }
}

// ---------------------------------------------------------------------------------------
// Problems: zod issues flattened to (path, expected), located in the YAML, one reported.

interface Context {
  file: string;
  document: Document;
  lineCounter: LineCounter;
  /** Dotted field path -> the command-line option that set it. */
  optionOfPath: Map<string, string>;
  /** Dotted field path -> the full label of whatever set it (a sweep file line). */
  labelOfPath?: Map<string, string>;
  raw: Record<string, unknown>;
}

interface Problem {
  path: (string | number)[];
  expected: string;
  /** Set when the problem is a key that is not allowed. */
  unknownKey?: string;
}

type Issue = z.core.$ZodIssue;

function collectProblems(issues: readonly Issue[], prefix: (string | number)[]): Problem[] {
  const problems: Problem[] = [];
  for (const issue of issues) {
    const here = [...prefix, ...issue.path.map((segment) => (typeof segment === 'number' ? segment : String(segment)))];
    if (issue.code === 'invalid_union' && issue.errors.length > 0) {
      // The union's branch that got furthest into the value explains the failure best; when
      // none got past the value's type, the union's own "expected" text is the clearest.
      let best: readonly Issue[] | null = null;
      let bestDepth = 0;
      for (const branch of issue.errors) {
        const depth = progressOf(branch);
        if (depth > bestDepth) {
          bestDepth = depth;
          best = branch;
        }
      }
      if (best) problems.push(...collectProblems(best, here));
      else problems.push({ path: here, expected: issue.message });
    } else if (issue.code === 'unrecognized_keys') {
      for (const key of issue.keys) problems.push({ path: [...here, key], expected: issue.message, unknownKey: key });
    } else {
      problems.push({ path: here, expected: issue.message });
    }
  }
  return problems;
}

/** How far into a value a union branch got: path depth, plus one when its type matched (refinement or key issues). */
function progressOf(issues: readonly Issue[]): number {
  let depth = 0;
  for (const issue of issues) {
    const typeMatched = issue.code === 'custom' || issue.code === 'unrecognized_keys' ? 1 : 0;
    const nested = issue.code === 'invalid_union' && issue.errors.length > 0 ? Math.max(...issue.errors.map(progressOf)) : 0;
    depth = Math.max(depth, issue.path.length + typeMatched + nested);
  }
  return depth;
}

/** An unknown key often explains the other problems (a misspelt field is also "missing"), so it goes first; then the earliest line. */
function pickProblem(problems: Problem[], context: Context): Problem {
  let best = problems[0];
  let bestRank = [Infinity, Infinity];
  for (const problem of problems) {
    const set = context.optionOfPath.has(dotted(problem.path)) || [...(context.labelOfPath?.keys() ?? [])].some((key) => dotted(problem.path).startsWith(key));
    const line = set ? 0 : (lineOfPath(context, problem.path) ?? Infinity);
    const rank = [problem.unknownKey === undefined ? 1 : 0, line];
    if (rank[0] < bestRank[0] || (rank[0] === bestRank[0] && rank[1] < bestRank[1])) {
      best = problem;
      bestRank = rank;
    }
  }
  return best;
}

function formatProblem(problem: Problem, context: Context): string {
  const got = problem.unknownKey !== undefined ? `unknown key ${JSON.stringify(problem.unknownKey)}` : describeValue(valueAt(context.raw, problem.path));
  return `${fieldLabel(context, problem.path)}: got ${got}, expected ${problem.expected}`;
}

/** `<file>: <field> (line N)`, or `<file>: --option` when a command-line option set the field. */
function fieldLabel(context: Context, fieldPath: (string | number)[], line?: number | null): string {
  // A field set by a sweep (or inside a mapping it set) is named by the sweep's label.
  for (let length = fieldPath.length; length > 0 && context.labelOfPath; length--) {
    const label = context.labelOfPath.get(dotted(fieldPath.slice(0, length)));
    if (label) return length === fieldPath.length ? label : `${label} at ${dotted(fieldPath.slice(length))}`;
  }
  const option = context.optionOfPath.get(dotted(fieldPath));
  if (option) return `${context.file}: ${option}`;
  const where = line === undefined ? lineOfPath(context, fieldPath) : line;
  return `${context.file}: ${dotted(fieldPath)}${where === null ? '' : ` (line ${where})`}`;
}

function fail(context: Context, fieldPath: (string | number)[], detail: string, line?: number | null): never {
  throw new InputError(`${fieldLabel(context, fieldPath, line)}: ${detail}`);
}

function dotted(fieldPath: (string | number)[]): string {
  let text = '';
  for (const segment of fieldPath) text += typeof segment === 'number' ? `[${segment}]` : text === '' ? segment : `.${segment}`;
  return text;
}

/**
 * Line of a field in the YAML: the line of its key (where the user wrote the field), or of
 * the list item; for a field that is missing, the line of the nearest enclosing one.
 */
function lineOfPath(context: Context, fieldPath: (string | number)[]): number | null {
  const { document, lineCounter } = context;
  let node: unknown = document.contents;
  let line = lineOfNode(node, lineCounter);
  for (const segment of fieldPath) {
    if (isMap(node)) {
      const pair = node.items.find((item) => keyText(item.key) === String(segment));
      // A missing top-level field has no better place than "somewhere in the file".
      if (!pair) return node === document.contents ? null : line;
      line = lineOfNode(pair.key, lineCounter) ?? lineOfNode(pair.value, lineCounter) ?? line;
      node = pair.value;
    } else if (isSeq(node) && typeof segment === 'number' && segment < node.items.length) {
      node = node.items[segment];
      line = lineOfNode(node, lineCounter) ?? line;
    } else {
      return line;
    }
  }
  return line;
}

function keyText(key: unknown): string {
  return isScalar(key) ? String(key.value) : String(key);
}

function lineOfNode(node: unknown, lineCounter: LineCounter): number | null {
  const range = (node as { range?: [number, number, number] } | null | undefined)?.range;
  return range ? lineCounter.linePos(range[0]).line : null;
}

function lineOfOffset(text: string, offset: number): number {
  let line = 1;
  for (let i = 0; i < offset; i++) if (text.charCodeAt(i) === 10) line++;
  return line;
}

function valueAt(root: unknown, fieldPath: (string | number)[]): unknown {
  let value = root;
  for (const segment of fieldPath) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<string | number, unknown>)[segment];
  }
  return value;
}

/** The bad value as the user would recognize it, kept short. */
function describeValue(value: unknown): string {
  if (value === undefined) return 'nothing (the field is missing)';
  if (typeof value === 'number') return Number.isNaN(value) ? 'NaN (.nan)' : Number.isFinite(value) ? String(value) : value > 0 ? 'Infinity (.inf)' : '-Infinity (-.inf)';
  if (typeof value === 'string') return truncate(JSON.stringify(value));
  if (value === null) return 'null (an empty value)';
  if (typeof value === 'boolean' || typeof value === 'bigint') return String(value);
  if (value instanceof Date) return JSON.stringify(value.toISOString());
  try {
    const json = JSON.stringify(value, (_key, v: unknown) => (typeof v === 'number' && !Number.isFinite(v) ? String(v) : v));
    return truncate((Array.isArray(value) ? 'the list ' : 'the mapping ') + json);
  } catch {
    return 'a value that cannot be shown';
  }
}

function truncate(text: string, limit = 80): string {
  return text.length <= limit ? text : `${text.slice(0, limit - 3)}...`;
}

function oneLine(text: string): string {
  return truncate(text.replace(/\s+/g, ' ').trim(), 160);
}

function isPlainObject(value: unknown): value is Record<string, unknown> {
  return value !== null && typeof value === 'object' && !Array.isArray(value) && !(value instanceof Date) && !(value instanceof Map) && !(value instanceof Set);
}

function errorCode(error: unknown): string {
  const code = (error as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? code : error instanceof Error ? oneLine(error.message) : 'unknown error';
}

// ---------------------------------------------------------------------------------------
// Overrides: merged into the raw tree so that the schema checks them like file fields.

/** Returns true when `--trace` set the trace (its path is then relative to the current directory). */
function applyOverrides(raw: Record<string, unknown>, overrides: ScenarioOverrides, context: Context): boolean {
  const set = (section: string, key: string, value: unknown, option: string): Record<string, unknown> | null => {
    if (raw[section] === undefined) raw[section] = {};
    const parent = raw[section];
    // A section of the wrong type is reported as a file error by the schema.
    if (!isPlainObject(parent)) return null;
    parent[key] = value;
    context.optionOfPath.set(`${section}.${key}`, option);
    return parent;
  };
  if (overrides.tasksPerHour !== undefined && overrides.trace !== undefined) {
    throw new InputError(`${context.file}: --rate and --trace: got both, expected at most one of them (a rate makes Poisson demand, a trace replays recorded tasks)`);
  }
  if (overrides.robots !== undefined) set('fleet', 'robots', overrides.robots, '--robots');
  if (overrides.policy !== undefined) {
    const previous = raw.policy;
    // Options of another policy would not fit the new one, so they are dropped with its name.
    if (isPlainObject(previous) && previous.name !== overrides.policy) raw.policy = {};
    set('policy', 'name', overrides.policy, '--policy');
  }
  if (overrides.hours !== undefined) set('run', 'hours', overrides.hours, '--hours');
  if (overrides.replications !== undefined) set('run', 'replications', overrides.replications, '--reps');
  if (overrides.seed !== undefined) set('run', 'seed', overrides.seed, '--seed');
  if (overrides.warmup !== undefined) set('run', 'warmup', overrides.warmup, '--warmup');
  if (overrides.tasksPerHour !== undefined) {
    const demand = set('demand', 'tasksPerHour', overrides.tasksPerHour, '--rate');
    if (demand && demand.kind !== 'poisson') {
      // Switching to Poisson demand keeps the file's point choices (saturated files have them); a trace path means nothing now.
      delete demand.trace;
      demand.kind = 'poisson';
    }
  }
  for (const field of overrides.fields ?? []) {
    let parent: Record<string, unknown> = raw;
    for (let i = 0; i < field.path.length - 1; i++) {
      const key = field.path[i];
      if (parent[key] === undefined) parent[key] = {};
      const next = parent[key];
      if (!isPlainObject(next)) {
        throw new InputError(`${field.label}: got a path through ${field.path.slice(0, i + 1).join('.')}, which is ${describeValue(next)}, expected a path to a field inside a mapping`);
      }
      parent = next;
    }
    const last = field.path[field.path.length - 1];
    // A new policy name drops the file's options of the old policy (they would not fit), as --policy does.
    if (field.path.length === 2 && field.path[0] === 'policy' && last === 'name' && parent.name !== field.value) {
      for (const key of Object.keys(parent)) if (!(overrides.fields ?? []).some((f) => f.path[0] === 'policy' && f.path[1] === key)) delete parent[key];
    }
    parent[last] = field.value;
    (context.labelOfPath ??= new Map()).set(field.path.join('.'), field.label);
  }
  if (overrides.trace !== undefined) {
    const demand = set('demand', 'trace', overrides.trace, '--trace');
    if (demand) {
      delete demand.tasksPerHour;
      delete demand.profile;
      delete demand.pickups;
      delete demand.drops;
      demand.kind = 'trace';
      return true;
    }
  }
  return false;
}

// ---------------------------------------------------------------------------------------
// Size limits: a run that could not fit in memory is refused before it starts. Fixed
// limits (not this machine's free memory) so that a scenario accepted on a workstation is
// accepted on every node of a cluster too.

/** Tasks one replication may release: each costs about 60 bytes while the run lasts (task arrays and lead times), so this is about 0.6 GB per worker. */
export const maxTasksPerReplication = 10_000_000;
/** Numbers one replication's metric series may hold (8 bytes each: 400 MB). */
export const maxSeriesValuesPerReplication = 50_000_000;

/** Expected arrivals of a Poisson demand over `hours`, with its hourly profile repeating. */
function expectedArrivals(tasksPerHour: number, profile: number[] | null, hours: number): number {
  if (profile === null) return tasksPerHour * hours;
  const cycle = profile.reduce((sum, multiplier) => sum + multiplier, 0);
  const whole = Math.floor(hours / profile.length);
  let total = whole * cycle;
  let left = hours - whole * profile.length;
  for (let h = 0; left > 0; h++, left--) total += profile[h] * Math.min(1, left);
  return tasksPerHour * total;
}

function checkRunSize(demand: DemandSpec, hours: number, sampleSeconds: number, layout: Layout, context: Context): void {
  const format = (n: number) => Math.round(n).toLocaleString('en-US');
  if (demand.kind === 'poisson') {
    const tasks = expectedArrivals(demand.tasksPerHour, demand.profile, hours);
    if (tasks > maxTasksPerReplication) {
      fail(
        context,
        ['demand', 'tasksPerHour'],
        `got ${demand.tasksPerHour}, expected a rate that releases at most ${format(maxTasksPerReplication)} tasks per replication (the memory limit; this one releases about ${format(tasks)} in ${hours} h)`,
      );
    }
  } else if (demand.kind === 'trace' && demand.tasks.length > maxTasksPerReplication) {
    fail(context, ['demand', 'trace'], `got ${format(demand.tasks.length)} task rows, expected at most ${format(maxTasksPerReplication)} (the memory limit per replication)`);
  }
  const stations = layout.pickups.length + layout.drops.length;
  const values = Math.ceil((hours * 3600) / sampleSeconds) * (8 + 2 * stations);
  if (values > maxSeriesValuesPerReplication) {
    fail(
      context,
      ['run', 'hours'],
      `got ${hours}, expected a run whose metric series holds at most ${format(maxSeriesValuesPerReplication)} numbers (the memory limit; ${hours} h in ${sampleSeconds} s samples over ${stations} stations hold ${format(values)}; fewer hours or a longer run.sampleSeconds)`,
    );
  }
}

// ---------------------------------------------------------------------------------------
// Meaning against the layout.

/** Line of layout row `row` (0-based) when the layout is a `|` block; else the line of the field. */
function layoutRowLine(context: Context, row: number): number | null {
  const fieldLine = lineOfPath(context, ['layout']);
  const contents = context.document.contents;
  if (!isMap(contents)) return fieldLine;
  const node = contents.items.find((pair) => keyText(pair.key) === 'layout')?.value;
  if (!isScalar(node) || node.type !== 'BLOCK_LITERAL' || typeof node.value !== 'string' || !node.range) return fieldLine;
  const headerLine = context.lineCounter.linePos(node.range[0]).line;
  const leadingBlank = /^(?:[ \t]*\n)*/.exec(node.value)?.[0].split('\n').length ?? 1;
  return headerLine + leadingBlank + row;
}

function loadLayout(text: string, context: Context): Layout {
  try {
    return parseLayout(text);
  } catch (error) {
    if (!(error instanceof LayoutError)) throw error;
    const row = /\brow (\d+)\b/.exec(error.message);
    const line = row ? layoutRowLine(context, Number(row[1]) - 1) : lineOfPath(context, ['layout']);
    return fail(context, ['layout'], oneLine(error.message.replace(/^layout /, '')), line);
  }
}

function checkLayoutForDemand(layout: Layout, mode: DemandMode, context: Context): void {
  const layoutLine = lineOfPath(context, ['layout']);
  if (mode === 'round-trip' && layout.storage.length === 0) {
    fail(context, ['layout'], 'got no storage point (S), expected at least one for demand.mode round-trip', layoutLine);
  }
  if (mode === 'delivery' && layout.pickups.length === 0) {
    fail(context, ['layout'], 'got no pickup point (P), expected at least one', layoutLine);
  }
  if (layout.drops.length === 0) fail(context, ['layout'], 'got no drop point (D), expected at least one', layoutLine);

  // Every endpoint in one connected area: take the area holding most endpoints as the floor
  // and name the first endpoint (reading order) outside it.
  const { labels, count } = componentLabels(layout);
  const endpointsPerArea = new Int32Array(count);
  for (let cell = 0; cell < layout.cellCount; cell++) if (isEndpointKind(layout.kind[cell])) endpointsPerArea[labels[cell]]++;
  let main = 0;
  for (let area = 1; area < count; area++) if (endpointsPerArea[area] > endpointsPerArea[main]) main = area;
  let reference = -1;
  for (let cell = 0; cell < layout.cellCount && reference < 0; cell++) if (isEndpointKind(layout.kind[cell]) && labels[cell] === main) reference = cell;
  for (let cell = 0; cell < layout.cellCount; cell++) {
    if (!isEndpointKind(layout.kind[cell]) || labels[cell] === main) continue;
    fail(
      context,
      ['layout'],
      `got ${describeCell(layout, cell)} that cannot be reached from ${describeCell(layout, reference)}, expected every P, D, S, H and C cell in one connected area`,
      layoutRowLine(context, Math.floor(cell / layout.width)),
    );
  }
}

// ---------------------------------------------------------------------------------------
// Operating realism: per-station handling, battery, breakdowns.

/**
 * `handling.groups` names sets of station cells; `handling.stations` keys are a station cell
 * `x:y` or a group name, each with pickupSeconds and/or dropSeconds. A field applies to the
 * cells of its kind in the demand's mode (pickupSeconds: P in delivery mode, S in round
 * trips; dropSeconds: D). A cell key wins over a group holding the cell; two groups giving
 * one cell the same field is an error. Returns undefined when nothing is overridden.
 */
function normalizeStationHandling(handling: ParsedScenarioHandling, mode: DemandMode, layout: Layout, context: Context): Map<number, StationHandling> | undefined {
  const pickupKindHere = mode === 'round-trip' ? CellKind.Storage : CellKind.Pickup;
  const stationKinds = mode === 'round-trip' ? 'S or D' : 'P or D';
  const isStation = (cell: number) => layout.kind[cell] === pickupKindHere || layout.kind[cell] === CellKind.Drop;
  const stationCell = (label: string, field: (string | number)[]): number => {
    const cell = parseCellLabel(layout, label);
    if (cell === null || !isStation(cell)) {
      const found = cell === null ? `a station cell written x:y inside the ${layout.width}x${layout.height} grid` : `a station cell (${stationKinds} in ${mode} mode), not ${describeCell(layout, cell)}`;
      fail(context, field, `got ${JSON.stringify(label)}, expected ${found}`);
    }
    return cell;
  };
  const groups = new Map<string, number[]>();
  for (const [name, members] of Object.entries(handling.groups ?? {})) {
    if (name.includes(':') || name.trim() === '') fail(context, ['handling', 'groups', name], `got the group name ${JSON.stringify(name)}, expected a name without ":" (cells are written x:y)`);
    if (members.length === 0) fail(context, ['handling', 'groups', name], 'got an empty list, expected at least one station cell "x:y"');
    const cells: number[] = [];
    members.forEach((label, i) => {
      const cell = stationCell(label, ['handling', 'groups', name, i]);
      if (cells.includes(cell)) fail(context, ['handling', 'groups', name, i], `got ${JSON.stringify(label)} twice, expected each cell once`);
      cells.push(cell);
    });
    groups.set(name, cells);
  }
  const entries = Object.entries(handling.stations ?? {});
  if (entries.length === 0) return undefined;
  const fromGroup = new Map<number, StationHandling>();
  const groupOf = new Map<string, string>();
  const fromCell = new Map<number, StationHandling>();
  for (const [key, value] of entries) {
    const field = ['handling', 'stations', key];
    const cells = groups.get(key) ?? (key.includes(':') ? [stationCell(key, field)] : null);
    if (cells === null) {
      const known = groups.size > 0 ? `; groups: ${[...groups.keys()].join(', ')}` : '';
      fail(context, field, `got ${JSON.stringify(key)}, expected a station cell "x:y" or a group named in handling.groups${known}`);
    }
    const isGroup = groups.has(key);
    for (const [name, kind, what] of [
      ['pickupSeconds', pickupKindHere, mode === 'round-trip' ? 'storage points (S)' : 'pickup points (P)'],
      ['dropSeconds', CellKind.Drop, 'drop points (D)'],
    ] as const) {
      const spec = value[name];
      if (spec === undefined) continue;
      const applies = cells.filter((cell) => layout.kind[cell] === kind);
      if (applies.length === 0) {
        const which = isGroup ? `group ${JSON.stringify(key)} has none` : `${describeCell(layout, cells[0])} is not one`;
        fail(context, [...field, name], `got a ${name} for ${JSON.stringify(key)}, expected it only for ${what} in ${mode} mode (${which})`);
      }
      for (const cell of applies) {
        const target = isGroup ? fromGroup : fromCell;
        const entry = target.get(cell) ?? {};
        if (isGroup && entry[name] !== undefined) {
          fail(context, [...field, name], `got a second ${name} for ${cellLabel(layout, cell)} (also in group ${JSON.stringify(groupOf.get(`${cell}/${name}`))}), expected each cell in at most one group with ${name}`);
        }
        entry[name] = toHandlingSpec(spec);
        target.set(cell, entry);
        if (isGroup) groupOf.set(`${cell}/${name}`, key);
      }
    }
  }
  const merged = new Map<number, StationHandling>();
  const cellsInOrder = [...new Set([...fromGroup.keys(), ...fromCell.keys()])].sort((a, b) => a - b);
  for (const cell of cellsInOrder) merged.set(cell, { ...fromGroup.get(cell), ...fromCell.get(cell) });
  return merged;
}

function normalizeBattery(battery: NonNullable<ParsedScenario['fleet']['battery']>, layout: Layout, context: Context): BatterySpec {
  if (layout.chargers.length === 0) {
    fail(context, ['fleet', 'battery'], 'got a battery, expected at least one charger (C) in the layout for the robots to charge at');
  }
  return {
    runHours: battery.runHours,
    chargeHours: battery.chargeHours,
    chargeBelow: battery.chargeBelow ?? defaultBattery.chargeBelow,
    chargeUpTo: battery.chargeUpTo ?? defaultBattery.chargeUpTo,
  };
}

type ParsedDuration = z.output<ReturnType<typeof durationSchema>>;

/** A duration in `unitSeconds` units (3600 for hours, 60 for minutes) as a spec in seconds; a bare number is an exponential mean. */
function toDurationSeconds(value: ParsedDuration, unitSeconds: number): HandlingSpec {
  if (typeof value === 'number') return { dist: 'exponential', mean: value * unitSeconds };
  switch (value.dist) {
    case 'exponential':
      return { dist: 'exponential', mean: value.mean * unitSeconds };
    case 'uniform':
      return { dist: 'uniform', min: value.min * unitSeconds, max: value.max * unitSeconds };
    case 'fixed':
      return { dist: 'fixed', seconds: ('hours' in value ? value.hours : value.minutes) * unitSeconds };
  }
}

function normalizeBreakdowns(breakdowns: NonNullable<NonNullable<ParsedScenario['faults']>['breakdowns']>): BreakdownSpec {
  return { timeToFailure: toDurationSeconds(breakdowns.mtbfHours, 3600), repair: toDurationSeconds(breakdowns.mttrMinutes, 60) };
}

function toDelaySpec(value: z.output<typeof delaysSchema>): DelaySpec {
  const seconds = value.seconds;
  return { probabilityPerMove: value.probabilityPerMove, seconds: typeof seconds === 'number' ? { dist: 'fixed', seconds } : seconds };
}

function toHandlingSpec(value: ParsedHandling): HandlingSpec {
  if (value === undefined) return { dist: 'fixed', seconds: 0 };
  if (typeof value === 'number') return { dist: 'fixed', seconds: value };
  return value;
}

function pickupKind(mode: DemandMode): { kind: CellKind; text: string } {
  return mode === 'round-trip' ? { kind: CellKind.Storage, text: 'storage point (S)' } : { kind: CellKind.Pickup, text: 'pickup point (P)' };
}
const dropKind = { kind: CellKind.Drop as CellKind, text: 'drop point (D)' };

function listCells(layout: Layout, cells: Int32Array, limit = 8): string {
  const labels: string[] = [];
  for (let i = 0; i < cells.length && i < limit; i++) labels.push(cellLabel(layout, cells[i]));
  return labels.join(', ') + (cells.length > limit ? ', ...' : '');
}

function toWeights(
  weights: Record<string, number>,
  field: (string | number)[],
  expectedKind: { kind: CellKind; text: string },
  cells: Int32Array,
  layout: Layout,
  context: Context,
): Map<number, number> {
  const byCell = new Map<number, number>();
  const keyOfCell = new Map<number, string>();
  for (const [key, weight] of Object.entries(weights)) {
    const keyPath = [...field, key];
    const cell = parseCellLabel(layout, key);
    if (cell === null || layout.kind[cell] !== expectedKind.kind) {
      const what = cell === null ? `a ${expectedKind.text} written x:y inside the ${layout.width}x${layout.height} grid` : `a ${expectedKind.text}, not ${describeCell(layout, cell)}`;
      fail(context, keyPath, `got ${JSON.stringify(key)}, expected ${what} (${expectedKind.text.split(' ')[0]} cells: ${listCells(layout, cells)})`);
    }
    const earlier = keyOfCell.get(cell);
    if (earlier !== undefined) fail(context, keyPath, `got ${JSON.stringify(key)}, expected each cell once (it is the same cell as ${JSON.stringify(earlier)})`);
    keyOfCell.set(cell, key);
    byCell.set(cell, weight);
  }
  return byCell;
}

function toPickupChoice(value: ParsedPickups, mode: DemandMode, layout: Layout, context: Context): PointChoice {
  if (value === undefined || value === 'uniform') return { kind: 'uniform' };
  const expected = pickupKind(mode);
  const cells = mode === 'round-trip' ? layout.storage : layout.pickups;
  return { kind: 'weights', weights: toWeights(value.weights, ['demand', 'pickups', 'weights'], expected, cells, layout, context) };
}

function toDropChoice(value: ParsedDrops, layout: Layout, context: Context): PointChoice {
  if (value === undefined || value === 'uniform') return { kind: 'uniform' };
  if (value.weights !== undefined) return { kind: 'weights', weights: toWeights(value.weights, ['demand', 'drops', 'weights'], dropKind, layout.drops, layout, context) };
  return { kind: 'zipf', skew: value.skew ?? 0 };
}

function normalizeDemand(demand: ParsedScenario['demand'], mode: DemandMode, layout: Layout, traceBase: string, context: Context): DemandSpec {
  switch (demand.kind) {
    case 'poisson':
      return {
        kind: 'poisson',
        mode,
        tasksPerHour: demand.tasksPerHour,
        profile: demand.profile ?? null,
        pickups: toPickupChoice(demand.pickups, mode, layout, context),
        drops: toDropChoice(demand.drops, layout, context),
      };
    case 'saturated':
      return { kind: 'saturated', mode, pickups: toPickupChoice(demand.pickups, mode, layout, context), drops: toDropChoice(demand.drops, layout, context) };
    case 'trace': {
      const tracePath = path.resolve(traceBase, demand.trace);
      return { kind: 'trace', mode, tracePath, tasks: readTrace(tracePath, demand.trace, mode, layout, context) };
    }
  }
}

// ---------------------------------------------------------------------------------------
// Trace files: CSV, header `releaseSeconds,pickup,drop` (any order; other columns, such as
// an order id, are ignored), one task per row. Rows are sorted by release time, stably.

function readTrace(tracePath: string, written: string, mode: DemandMode, layout: Layout, context: Context): TraceTask[] {
  let bytes: Buffer;
  try {
    bytes = readFileSync(tracePath);
  } catch (error) {
    const code = errorCode(error);
    const reason = code === 'ENOENT' ? `no such file: ${tracePath}` : `${code} reading ${tracePath}`;
    return fail(context, ['demand', 'trace'], `got ${JSON.stringify(written)}, expected a readable CSV trace file (${reason})`);
  }
  const display = displayPath(tracePath);
  if (bytes.indexOf(0) >= 0) throw new InputError(`${display}: got binary data, expected a CSV text file with columns releaseSeconds,pickup,drop`);
  return parseTraceText(bytes.toString('utf8'), display, mode, layout);
}

function parseTraceText(text: string, display: string, mode: DemandMode, layout: Layout): TraceTask[] {
  const lines = text.replace(/^\uFEFF/, '').split(/\r?\n/);
  let lineIndex = 0;
  while (lineIndex < lines.length && lines[lineIndex].trim() === '') lineIndex++;
  if (lineIndex === lines.length) throw new InputError(`${display}: got an empty file, expected a CSV header releaseSeconds,pickup,drop and task rows`);
  const header = splitCsvLine(lines[lineIndex]).map((column) => column.trim());
  const column = (name: string): number => {
    const index = header.indexOf(name);
    if (index < 0 || header.indexOf(name, index + 1) >= 0) {
      throw new InputError(
        `${display}: header (line ${lineIndex + 1}): got ${JSON.stringify(lines[lineIndex].trim())}, expected the columns releaseSeconds,pickup,drop, each once`,
      );
    }
    return index;
  };
  const releaseColumn = column('releaseSeconds');
  const pickupColumn = column('pickup');
  const dropColumn = column('drop');
  const pickup = pickupKind(mode);
  const tasks: TraceTask[] = [];
  let row = 0;
  for (lineIndex++; lineIndex < lines.length; lineIndex++) {
    if (lines[lineIndex].trim() === '') continue;
    row++;
    const where = `${display}: row ${row} (line ${lineIndex + 1})`;
    const fields = splitCsvLine(lines[lineIndex]);
    if (fields.length !== header.length) {
      throw new InputError(`${where}: got ${fields.length} fields, expected ${header.length} like the header`);
    }
    const releaseText = fields[releaseColumn].trim();
    const releaseSeconds = Number(releaseText);
    if (releaseText === '' || !Number.isFinite(releaseSeconds) || releaseSeconds < 0) {
      throw new InputError(`${where} releaseSeconds: got ${JSON.stringify(releaseText)}, expected a finite number of seconds >= 0`);
    }
    const cellOf = (columnIndex: number, name: string, expected: { kind: CellKind; text: string }): number => {
      const label = fields[columnIndex].trim();
      const cell = parseCellLabel(layout, label);
      if (cell === null || layout.kind[cell] !== expected.kind) {
        const found = cell === null ? '' : ` (${describeCell(layout, cell)})`;
        throw new InputError(`${where} ${name}: got ${JSON.stringify(label)}${found}, expected a ${expected.text} of the layout written x:y`);
      }
      return cell;
    };
    tasks.push({ releaseSeconds, pickup: cellOf(pickupColumn, 'pickup', pickup), drop: cellOf(dropColumn, 'drop', dropKind) });
  }
  if (tasks.length === 0) throw new InputError(`${display}: got no task rows, expected at least one row after the header`);
  // Array.prototype.sort is stable (ES2019), so equal release times keep file order.
  tasks.sort((a, b) => a.releaseSeconds - b.releaseSeconds);
  return tasks;
}

/** Splits one CSV line; double-quoted fields may contain commas and doubled quotes. */
function splitCsvLine(line: string): string[] {
  const fields: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const character = line[i];
    if (quoted) {
      if (character === '"' && line[i + 1] === '"') {
        field += '"';
        i++;
      } else if (character === '"') quoted = false;
      else field += character;
    } else if (character === '"') quoted = true;
    else if (character === ',') {
      fields.push(field);
      field = '';
    } else field += character;
  }
  fields.push(field);
  return fields;
}

function displayPath(absolute: string): string {
  const relative = path.relative(process.cwd(), absolute);
  return relative !== '' && !relative.startsWith('..') && !path.isAbsolute(relative) ? relative : absolute;
}
