/** `fleetwright size`: the smallest fleet that sustains a target rate, with the hand formula, capacity headroom and the knee. */
import { loadScenarioFile, type ScenarioOverrides } from '../../scenarios/load.ts';
import { sizeFleet } from '../../experiments/size.ts';
import { parseWorkers } from '../../experiments/pool.ts';
import { prepareSetup } from '../../experiments/replications.ts';
import { checkOutputFolder, writeOutputFolder } from '../../experiments/output-folder.ts';
import { renderSizeTable } from '../../reports/size-table.ts';
import { toJson } from '../../reports/summary.ts';
import { runContext } from '../../reports/run-context.ts';
import { InputError } from '../../sim/errors.ts';

export interface SizeOptionValues {
  target: string;
  min?: string;
  max?: string;
  leadP95?: string;
  confidence?: string;
  workers?: string;
  json?: boolean;
  out?: string;
}

function positive(text: string | undefined, option: string, what: string, integer: boolean): number | undefined {
  if (text === undefined) return undefined;
  const value = text.trim() === '' ? NaN : Number(text);
  if (!Number.isFinite(value) || value <= 0 || (integer && !Number.isSafeInteger(value))) throw new InputError(`${option}: got ${JSON.stringify(text)}, expected ${what}`);
  return value;
}

export async function sizeCommand(scenarioPath: string, options: SizeOptionValues, overrides: ScenarioOverrides): Promise<void> {
  const target = positive(options.target, '--target', 'tasks per hour > 0', false)!;
  const min = positive(options.min, '--min', 'a whole number of robots >= 1', true);
  const max = positive(options.max, '--max', 'a whole number of robots >= 1', true);
  const leadP95 = positive(options.leadP95, '--lead-p95', 'a number of seconds > 0', false) ?? null;
  const workers = parseWorkers(options.workers);
  const fields = options.confidence === undefined ? [] : [{ path: ['run', 'confidence'], value: Number(options.confidence.trim() === '' ? NaN : options.confidence), label: `${scenarioPath}: --confidence` }];
  const base = loadScenarioFile(scenarioPath, { ...overrides, fields });
  let scenario = base;
  if (base.demand.kind !== 'trace') {
    try {
      scenario = loadScenarioFile(scenarioPath, { ...overrides, fields, tasksPerHour: target });
    } catch (error) {
      if (error instanceof InputError) throw new InputError(error.message.replace('--rate', '--target'));
      throw error;
    }
  }
  prepareSetup(scenario, overrides.policy !== undefined ? '--policy' : undefined);
  if (options.out !== undefined) checkOutputFolder(options.out, ['size.json', 'context.json']);
  const document = await sizeFleet(scenario, {
    target,
    min,
    max,
    replications: scenario.run.replications,
    leadP95Limit: leadP95,
    workers,
    progress: process.stderr.isTTY && !options.json ? (text) => process.stderr.write(`\r\x1b[Ksize: ${text}`) : undefined,
  });
  if (process.stderr.isTTY && !options.json) process.stderr.write('\r\x1b[K');
  if (options.out !== undefined) {
    writeOutputFolder(options.out, [
      { name: 'size.json', content: `${toJson(document)}\n` },
      { name: 'context.json', content: `${toJson(runContext(scenario, process.argv.slice(2)))}\n` },
    ]);
  }
  if (options.json) process.stdout.write(`${toJson(document)}\n`);
  else process.stdout.write(`${renderSizeTable(document)}\n`);
  if (options.out !== undefined && !options.json) process.stderr.write(`results written to ${options.out}/ (size.json, context.json; fleetwright report ${options.out} draws them)\n`);
}
