/**
 * Charts: Observable Plot (@observablehq/plot) renders each chart to SVG in Node, with
 * linkedom as the DOM, so a page carries finished SVG and needs no script in the browser.
 * Plot was chosen because it is a maintained, declarative layer over d3's scales and
 * shapes (axes, ticks, legends, facets, interval marks come from it, not from our code)
 * and it renders without a browser given any DOM implementation; linkedom is a small,
 * fast DOM with correct serialization (text is escaped by its outerHTML).
 *
 * `chart` also returns the data table that goes under every chart (accessibility: the
 * same numbers as text).
 */
import * as Plot from '@observablehq/plot';
import { parseHTML } from 'linkedom';
import { escapeHtml } from './escape.ts';

export type PlotOptions = Plot.PlotOptions;

/** Renders a Plot specification to SVG (or a figure with a legend) markup. */
export function renderPlot(options: PlotOptions): string {
  // linkedom's types name the DOM's Window, which the Node type check does not load.
  const { document } = parseHTML('<!doctype html><html><head></head><body></body></html>') as unknown as { document: unknown };
  const node = Plot.plot({ style: { fontSize: '11px', background: 'white', color: '#111' }, ...options, document } as PlotOptions) as unknown as { outerHTML: string };
  return node.outerHTML;
}

/** A colour legend alone (swatches), for charts drawn side by side under one legend. */
export function renderLegend(options: Plot.LegendScales): string {
  const { document } = parseHTML('<!doctype html><html><head></head><body></body></html>') as unknown as { document: unknown };
  const node = Plot.legend({ style: { fontSize: '11px', background: 'white', color: '#111' }, ...options, document } as Plot.LegendScales) as unknown as { outerHTML: string };
  return node.outerHTML;
}

export interface TableColumn<T> {
  label: string;
  value: (row: T) => string | number;
  /** Right-align (numbers). */
  numeric?: boolean;
}

export function dataTable<T>(caption: string, columns: TableColumn<T>[], rows: T[], note?: string): string {
  const head = columns.map((c) => `<th scope="col"${c.numeric ? ' class="num"' : ''}>${escapeHtml(c.label)}</th>`).join('');
  const body = rows
    .map((row) => `<tr>${columns.map((c, i) => (i === 0 ? `<th scope="row">${escapeHtml(c.value(row))}</th>` : `<td${c.numeric ? ' class="num"' : ''}>${escapeHtml(c.value(row))}</td>`)).join('')}</tr>`)
    .join('\n');
  const foot = note ? `<p class="table-note">${escapeHtml(note)}</p>` : '';
  return `<table class="data"><caption>${escapeHtml(caption)}</caption><thead><tr>${head}</tr></thead><tbody>\n${body}\n</tbody></table>${foot}`;
}

/**
 * A long table made compact for the page and for A4: at most `maxRows` rows (the first
 * ones: callers sort by importance), laid out as up to `parts` side-by-side tables with the
 * same header, and a note naming the file that holds every row. Each part is a real table
 * (screen readers read it row by row), the first with the caption.
 */
export function compactTable<T>(caption: string, columns: TableColumn<T>[], rows: T[], options: { maxRows?: number; parts?: number; note?: string } = {}): string {
  const shown = rows.slice(0, options.maxRows ?? rows.length);
  const parts = Math.max(1, Math.min(options.parts ?? 1, Math.ceil(shown.length / 4)));
  const size = Math.ceil(shown.length / parts);
  const chunks = parts === 1 ? [shown] : Array.from({ length: parts }, (_, i) => shown.slice(i * size, (i + 1) * size)).filter((c) => c.length > 0);
  const tables = chunks.map((chunk, i) => dataTable(chunks.length > 1 ? `${caption} (${i + 1} of ${chunks.length})` : caption, columns, chunk));
  const hidden = rows.length - shown.length;
  const note = [hidden > 0 ? `${shown.length} of ${rows.length} rows shown.` : '', options.note ?? ''].filter(Boolean).join(' ');
  return `<div class="table-parts">${tables.join('')}</div>${note ? `<p class="table-note">${escapeHtml(note)}</p>` : ''}`;
}

/** A chart with its title, a sentence saying how to read it, the SVG and the data table. */
export function chartFigure(id: string, title: string, reading: string, svg: string, table: string): string {
  return `<figure class="chart" id="${escapeHtml(id)}" data-chart="${escapeHtml(id)}">
<figcaption><h3>${escapeHtml(title)}</h3><p>${escapeHtml(reading)}</p></figcaption>
<div class="plot">${svg}</div>
${table}
</figure>`;
}
