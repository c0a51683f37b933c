/** `fleetwright report <results-dir> [--html FILE]`: the self-contained HTML report of a results folder. */
import path from 'node:path';
import { buildReport } from '../../reports/html/report.ts';
import { writeFileAtomic } from '../../reports/write-files.ts';
import { InputError } from '../../sim/errors.ts';
import { existsSync, statSync } from 'node:fs';

export function reportCommand(folder: string, htmlFile: string | undefined): void {
  const target = htmlFile ?? path.join(folder, 'report.html');
  const { html } = buildReport(folder);
  const directory = path.dirname(path.resolve(target));
  if (!existsSync(directory) || !statSync(directory).isDirectory()) throw new InputError(`--html: got ${JSON.stringify(htmlFile)}, expected a file path in an existing folder`);
  writeFileAtomic(target, html);
  process.stdout.write(`report written to ${path.resolve(target)}\n`);
}
