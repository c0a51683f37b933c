/** `fleetwright merge`: shard folders of one sweep plan into one folder. */
import { mergeSweeps } from '../../experiments/merge.ts';

export function mergeCommand(folders: string[], options: { out: string; partial?: boolean }): void {
  const result = mergeSweeps(folders, options.out, options.partial === true, process.argv.slice(2));
  const notes = [result.missing > 0 ? `${result.missing} missing` : '', result.doubled > 0 ? `${result.doubled} doubled, first kept` : ''].filter(Boolean).join(', ');
  process.stderr.write(`merge: ${result.runs} runs from ${result.folders} folders${notes ? ` (${notes})` : ''} into ${options.out}/ (runs.jsonl, runs.csv, summary.csv, context.json)\n`);
}
