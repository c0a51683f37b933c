/**
 * `fleetwright report <results-dir>`: one self-contained HTML file from a results folder.
 * The page kind follows the folder (results-folder.ts); each kind has its page builder.
 */
import { readResultsFolder, type ResultsFolder } from './results-folder.ts';
import { htmlPage } from './page.ts';
import { runPage } from './run-page.ts';
import { comparePage } from './compare-page.ts';
import { sizePage } from './size-page.ts';
import { sweepPage } from './sweep-page.ts';

const builders: Record<ResultsFolder['kind'], (results: ResultsFolder) => { title: string; body: string }> = {
  run: runPage,
  compare: comparePage,
  size: sizePage,
  sweep: sweepPage,
};

export function buildReport(folder: string): { html: string; kind: ResultsFolder['kind'] } {
  const results = readResultsFolder(folder);
  const page = builders[results.kind](results);
  return { html: htmlPage({ title: page.title, body: page.body }), kind: results.kind };
}
