/** Robot time split per policy as stacked bars of mean shares (a comparison's policies side by side). */
import * as Plot from '@observablehq/plot';
import { dataTable, renderPlot } from '../plot.ts';
import { percent } from '../format.ts';
import { robotTimeColours } from '../palette.ts';
import type { Json } from '../results-folder.ts';

const keys = ['loaded', 'empty', 'handling', 'waiting', 'parked'] as const;

export function robotTimeStack(summaries: Json[], labels: readonly string[]): { svg: string; table: string; segments: number } {
  const data = summaries.flatMap((s) => keys.map((key, i) => ({ policy: String(s.policy), category: labels[i], share: s.robotTime[key]?.mean ?? 0 })));
  const svg = renderPlot({
    width: 880,
    height: 60 + summaries.length * 36,
    marginLeft: 150,
    x: { domain: [0, 1], tickFormat: '%', label: 'share of robot time', grid: true },
    y: { domain: summaries.map((s) => String(s.policy)), label: null },
    color: { domain: [...labels], range: [...robotTimeColours], legend: true },
    marks: [Plot.barX(data, { y: 'policy', x: 'share', fill: 'category', stroke: 'white', strokeWidth: 0.5, order: [...labels], className: 'mark-robot-time-segment' }), Plot.ruleX([0])],
  });
  const table = dataTable(
    'Robot time split per policy (means)',
    [{ label: 'policy', value: (s: Json) => String(s.policy) }, ...keys.map((key, i) => ({ label: labels[i], value: (s: Json) => percent(s.robotTime[key]?.mean), numeric: true }))],
    summaries,
  );
  return { svg, table, segments: data.length };
}
