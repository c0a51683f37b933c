/**
 * runs.jsonl as a journal: one finished run per line, appended and flushed to disk
 * (fsync) before the next is counted done, so a sweep killed at any moment loses at most
 * the runs still in flight. On reopening, a last line cut short by the kill is dropped
 * (the file is truncated to its last complete line) and every complete line is indexed by
 * run id with its byte offset; lines are read back one at a time, so memory holds offsets,
 * never the results.
 */
import { closeSync, existsSync, fsyncSync, ftruncateSync, openSync, readSync, writeSync } from 'node:fs';
import { InputError } from '../sim/errors.ts';

export interface LineLocation {
  file: string;
  offset: number;
  length: number;
}

/** Calls `onLine(text, offset, length)` for every complete line; returns the length of the complete part. */
export function scanLines(file: string, onLine: (text: string, offset: number, length: number, lineNumber: number) => void): { completeBytes: number; totalBytes: number } {
  const fd = openSync(file, 'r');
  const chunk = Buffer.alloc(1 << 20);
  let carry = Buffer.alloc(0);
  let position = 0;
  let lineStart = 0;
  let lineNumber = 0;
  try {
    for (;;) {
      const read = readSync(fd, chunk, 0, chunk.length, position);
      if (read === 0) break;
      let data = Buffer.concat([carry, chunk.subarray(0, read)]);
      let start = 0;
      for (let i = data.indexOf(10, start); i >= 0; i = data.indexOf(10, start)) {
        lineNumber++;
        const length = i - start;
        onLine(data.toString('utf8', start, i), lineStart, length, lineNumber);
        lineStart += length + 1;
        start = i + 1;
      }
      carry = Buffer.from(data.subarray(start));
      data = carry;
      position += read;
    }
  } finally {
    closeSync(fd);
  }
  return { completeBytes: lineStart, totalBytes: position };
}

export function readLineAt(location: LineLocation): string {
  const fd = openSync(location.file, 'r');
  try {
    const buffer = Buffer.alloc(location.length);
    readSync(fd, buffer, 0, location.length, location.offset);
    return buffer.toString('utf8');
  } finally {
    closeSync(fd);
  }
}

export class RunJournal {
  private fd: number;
  /** Run id -> where its line is. */
  readonly done = new Map<string, LineLocation>();
  /** Bytes dropped from a line the last process did not finish. */
  readonly droppedBytes: number;
  private size: number;

  /** `accept(id)` says whether an id belongs to this sweep; a line that fails it, or is not JSON, is refused. */
  constructor(
    readonly file: string,
    accept: (id: string) => boolean,
  ) {
    let completeBytes = 0;
    let totalBytes = 0;
    if (existsSync(file)) {
      ({ completeBytes, totalBytes } = scanLines(file, (text, offset, length, lineNumber) => {
        let id: unknown;
        try {
          id = (JSON.parse(text) as { id?: unknown }).id;
        } catch {
          throw new InputError(`${file}: line ${lineNumber} is not a JSON run line (the file was changed by hand?), expected one JSON document per line`);
        }
        if (typeof id !== 'string' || !accept(id)) {
          throw new InputError(`${file}: line ${lineNumber} holds run ${JSON.stringify(id)}, which is not a run of this sweep plan and shard`);
        }
        // A run is done once; a second line for it (not written by fleetwright) is ignored.
        if (!this.done.has(id)) this.done.set(id, { file, offset, length });
      }));
    }
    this.fd = openSync(file, existsSync(file) ? 'r+' : 'w+');
    if (totalBytes > completeBytes) {
      ftruncateSync(this.fd, completeBytes);
      fsyncSync(this.fd);
    }
    this.droppedBytes = totalBytes - completeBytes;
    this.size = completeBytes;
  }

  /** Appends one run line and flushes it to disk before returning. */
  append(id: string, line: string): void {
    const bytes = Buffer.from(`${line}\n`, 'utf8');
    writeSync(this.fd, bytes, 0, bytes.length, this.size);
    fsyncSync(this.fd);
    this.done.set(id, { file: this.file, offset: this.size, length: bytes.length - 1 });
    this.size += bytes.length;
  }

  close(): void {
    if (this.fd >= 0) closeSync(this.fd);
    this.fd = -1;
  }
}
