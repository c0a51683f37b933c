/** `fleetwright replay <recording> [--html FILE]`: the self-contained replay viewer of a motion recording. */
import { existsSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { decodeRecording, RecordingError } from '../../reports/recording/format.ts';
import { replayPage } from '../../reports/html/replay-page.ts';
import { writeFileAtomic } from '../../reports/write-files.ts';
import { InputError } from '../../sim/errors.ts';

export function replayCommand(file: string, htmlFile: string | undefined): void {
  if (!existsSync(file) || statSync(file).isDirectory()) throw new RecordingError(`<recording>: got ${JSON.stringify(file)}, expected a recording file written by fleetwright run --record`);
  const recording = decodeRecording(readFileSync(file), path.basename(file));
  const target = htmlFile ?? path.join(path.dirname(file), `${path.basename(file).replace(/\.fwr$/i, '')}.html`);
  const directory = path.dirname(path.resolve(target));
  if (!existsSync(directory) || !statSync(directory).isDirectory()) throw new InputError(`--html: got ${JSON.stringify(htmlFile)}, expected a file path in an existing folder`);
  writeFileAtomic(target, replayPage(recording.header, recording.compressedBody, path.basename(file)));
  process.stdout.write(`replay written to ${path.resolve(target)}\n`);
}
