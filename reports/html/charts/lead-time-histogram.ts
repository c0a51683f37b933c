/** The lead-time distribution after the warm-up (lead-times.csv): bins of tasks, the mean and the 95th percentile marked. */
import * as Plot from '@observablehq/plot';
import { chartFigure, compactTable, renderPlot } from '../plot.ts';
import { fixed } from '../format.ts';
import { accentColour, stateColours } from '../palette.ts';

export interface LeadBin {
  policy?: string;
  fromSeconds: number;
  toSeconds: number;
  tasks: number;
}

export function leadTimeChart(id: string, bins: LeadBin[], marks: { label: string; seconds: number | null }[], facet = false): { html: string; bars: number } {
  const rules = marks.filter((m) => m.seconds !== null && Number.isFinite(m.seconds));
  const policies = [...new Set(bins.map((b) => b.policy ?? ''))];
  // Marker labels in the top margin, one row each, so that close lines never print over each other.
  const sorted = [...rules].sort((a, b) => (a.seconds as number) - (b.seconds as number));
  const rowHeight = 13;
  const labels = sorted.map((r, i) => ({ ...r, text: `${r.label} ${fixed(r.seconds, 0)} s`, dy: -4 - (sorted.length - 1 - i) * rowHeight }));
  const svg = renderPlot({
    width: 880,
    height: facet ? 40 + policies.length * 130 : 250,
    // Room for five-digit counts ("10,000") and the axis label beside them.
    marginLeft: 72,
    marginTop: facet ? 20 : 8 + sorted.length * rowHeight,
    marginRight: facet ? 130 : 20,
    x: { label: 'lead time, release to delivery (s)', nice: true },
    y: { grid: true, label: 'tasks', labelAnchor: 'center', nice: true },
    fy: facet ? { label: null, domain: policies } : undefined,
    marks: [
      Plot.rectY(bins, { x1: 'fromSeconds', x2: 'toSeconds', y: 'tasks', fy: facet ? 'policy' : undefined, fill: stateColours.loaded, insetLeft: 0.5, insetRight: 0.5, className: 'mark-lead-time-bin' }),
      Plot.ruleY([0]),
      ...(facet
        ? []
        : [
            Plot.ruleX(rules, { x: 'seconds', stroke: accentColour, strokeWidth: 2, strokeDasharray: '4 3', className: 'mark-lead-time-marker' }),
            ...labels.map((l) => Plot.text([l], { x: 'seconds', text: 'text', frameAnchor: 'top', dy: l.dy, dx: 4, textAnchor: 'start', fill: '#111', stroke: 'white', strokeWidth: 3, className: 'mark-lead-time-label' })),
          ]),
    ],
  });
  const table = compactTable(
    'Tasks per lead-time bin',
    [
      ...(facet ? [{ label: 'policy', value: (b: LeadBin) => b.policy ?? '' }] : []),
      { label: 'lead time (s)', value: (b: LeadBin) => `${fixed(b.fromSeconds, 0)}–${fixed(b.toSeconds, 0)}` },
      { label: 'tasks', value: (b: LeadBin) => b.tasks, numeric: true },
    ],
    bins.filter((b) => b.tasks > 0),
    { parts: facet ? 2 : 4, note: 'Bins without tasks are left out; lead-times.csv holds every bin.' },
  );
  return {
    html: chartFigure(
      id,
      'Lead-time distribution',
      `Tasks delivered after the warm-up, pooled over replications, by lead time${rules.length > 0 ? `; dashed lines: ${rules.map((r) => r.label).join(', ')}` : ''}. A long right tail means some tasks wait far longer than the mean suggests.`,
      svg,
      table,
    ),
    bars: bins.length,
  };
}
