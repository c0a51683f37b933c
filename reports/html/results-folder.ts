/**
 * Reads a results folder for the report and tells which command wrote it:
 *   run --out      summary.json (+ throughput.csv, stations.csv, cells.csv, lead-times.csv, context.json)
 *   compare --out  comparison.json (+ cells.csv, lead-times.csv, context.json with a policy column)
 *   size --out     size.json (the `size --json` document of DESIGN §7)
 *   sweep --out    runs.jsonl (one finished run per line: id, parameters, summary)
 * Files beside the main document are optional (older folders lack them): the pages leave
 * out what they cannot draw and say so. A missing folder, no main document or a file that
 * does not parse is an InputError naming the file.
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { InputError } from '../../sim/errors.ts';
import type { RunContext } from '../run-context.ts';

export type ResultsKind = 'run' | 'compare' | 'size' | 'sweep';

/** Loose shapes: the report reads what it draws and tolerates added fields. */
export type Json = any;

export interface CellCsvRow {
  policy?: string;
  x: number;
  y: number;
  kind: string;
  waitingSecondsPerHour: number;
}

export interface ResultsFolder {
  kind: ResultsKind;
  folder: string;
  /** summary.json, comparison.json, size.json, or the parsed lines of runs.jsonl. */
  document: Json;
  context: RunContext | null;
  cells: CellCsvRow[] | null;
  leadTimes: { policy?: string; fromSeconds: number; toSeconds: number; tasks: number }[] | null;
  throughput: { replication: number; startSeconds: number; endSeconds: number; throughputPerHour: number; warmup: number }[] | null;
}

const mainDocuments: [string, ResultsKind][] = [
  ['summary.json', 'run'],
  ['comparison.json', 'compare'],
  ['size.json', 'size'],
  ['runs.jsonl', 'sweep'],
];

function readJson(file: string): Json {
  const text = readFileSync(file, 'utf8');
  try {
    return JSON.parse(text);
  } catch (error) {
    throw new InputError(`${file}: not valid JSON (${(error as Error).message.split('\n')[0]}), expected the file fleetwright wrote`);
  }
}

function readCsv<T>(file: string, numeric: string[]): T[] | null {
  if (!existsSync(file)) return null;
  let rows: Record<string, string>[];
  try {
    rows = parse(readFileSync(file, 'utf8'), { columns: true, skip_empty_lines: true });
  } catch (error) {
    throw new InputError(`${file}: not valid CSV (${(error as Error).message.split('\n')[0]}), expected the file fleetwright wrote`);
  }
  const missing = numeric.filter((c) => rows.length > 0 && !(c in rows[0]));
  if (missing.length > 0) throw new InputError(`${file}: no column ${JSON.stringify(missing[0])}, expected the columns fleetwright writes`);
  return rows.map((row) => {
    const out: Record<string, string | number> = { ...row };
    for (const c of numeric) out[c] = row[c] === '' ? NaN : Number(row[c]);
    return out as T;
  });
}

export function readResultsFolder(folder: string): ResultsFolder {
  if (!existsSync(folder) || !statSync(folder).isDirectory()) {
    throw new InputError(`<results-dir>: got ${JSON.stringify(folder)}, expected a folder written by run --out, compare --out, size --out or sweep --out`);
  }
  const found = mainDocuments.find(([name]) => existsSync(path.join(folder, name)));
  if (!found) {
    throw new InputError(`<results-dir>: ${JSON.stringify(folder)} holds none of ${mainDocuments.map(([n]) => n).join(', ')}, expected a folder written by run --out, compare --out, size --out or sweep --out`);
  }
  const [name, kind] = found;
  const file = path.join(folder, name);
  let document: Json;
  if (kind === 'sweep') {
    const lines = readFileSync(file, 'utf8').split('\n').filter((l) => l.trim() !== '');
    document = lines.map((line, i) => {
      try {
        return JSON.parse(line);
      } catch {
        throw new InputError(`${file}: line ${i + 1} is not valid JSON, expected one finished run per line`);
      }
    });
  } else {
    document = readJson(file);
  }
  const contextFile = path.join(folder, 'context.json');
  return {
    kind,
    folder,
    document,
    context: existsSync(contextFile) ? readJson(contextFile) : null,
    cells: readCsv<CellCsvRow>(path.join(folder, 'cells.csv'), ['x', 'y', 'waitingSecondsPerHour']),
    leadTimes: readCsv(path.join(folder, 'lead-times.csv'), ['fromSeconds', 'toSeconds', 'tasks']),
    throughput: readCsv(path.join(folder, 'throughput.csv'), ['replication', 'startSeconds', 'endSeconds', 'throughputPerHour', 'warmup']),
  };
}
