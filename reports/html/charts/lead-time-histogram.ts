/** The lead-time distribution after the warm-up (lead-times.csv): bins of tasks, the mean and the 95th percentile marked. */
import * as Plot from '@observablehq/plot';
import { chartFigure, dataTable, renderPlot } from '../plot.ts';
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
  const svg = renderPlot({
    width: 880,
    height: facet ? 40 + policies.length * 130 : 240,
    marginRight: facet ? 130 : 20,
    x: { label: 'lead time, release to delivery (s)', nice: true },
    y: { grid: true, label: 'tasks' },
    fy: facet ? { label: null, domain: policies } : undefined,
    marks: [
      Plot.rectY(bins, { x1: 'fromSeconds', x2: 'toSeconds', y: 'tasks', fy: facet ? 'policy' : undefined, fill: stateColours.loaded, insetLeft: 0.5, insetRight: 0.5, className: 'mark-lead-time-bin' }),
      Plot.ruleY([0]),
      ...(facet ? [] : [Plot.ruleX(rules, { x: 'seconds', stroke: accentColour, strokeWidth: 2, strokeDasharray: '4 3', className: 'mark-lead-time-marker' }), Plot.text(rules, { x: 'seconds', text: 'label', frameAnchor: 'top', dx: 4, textAnchor: 'start', fill: '#111' })]),
    ],
  });
  const table = dataTable(
    'Tasks per lead-time bin',
    [
      ...(facet ? [{ label: 'policy', value: (b: LeadBin) => b.policy ?? '' }] : []),
      { label: 'from (s)', value: (b: LeadBin) => fixed(b.fromSeconds, 0), numeric: true },
      { label: 'to (s)', value: (b: LeadBin) => fixed(b.toSeconds, 0), numeric: true },
      { label: 'tasks', value: (b: LeadBin) => b.tasks, numeric: true },
    ],
    bins.filter((b) => b.tasks > 0),
    'Bins without tasks are left out of the table.',
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
