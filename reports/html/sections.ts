/** Pieces every report page shares: the heading, headline cards, scenario facts, safety note and provenance footer. */
import { escapeHtml } from './escape.ts';
import { safetyNote } from '../safety.ts';
import type { RunContext, SweepContext } from '../run-context.ts';
import type { Json } from './results-folder.ts';

export function heading(title: string, subtitle: string): string {
  return `<header><h1>${escapeHtml(title)}</h1><p class="subtitle">${escapeHtml(subtitle)}</p></header>`;
}

export function safetyBlock(): string {
  return `<aside class="safety" id="safety"><strong>Safety.</strong> ${escapeHtml(safetyNote)}</aside>`;
}

export interface Card {
  label: string;
  value: string;
  unit?: string;
  /** The JSON field the value shows (tests compare the two). */
  field?: string;
}

export function cards(items: Card[]): string {
  return `<div class="cards">${items
    .map(
      (c) =>
        `<div class="card"><div class="label">${escapeHtml(c.label)}</div><div class="value"${c.field ? ` data-field="${escapeHtml(c.field)}"` : ''}>${escapeHtml(c.value)}</div>${c.unit ? `<div class="unit">${escapeHtml(c.unit)}</div>` : ''}</div>`,
    )
    .join('')}</div>`;
}

export function warnings(messages: string[]): string {
  return messages.map((m) => `<p class="warning">${escapeHtml(m)}</p>`).join('\n');
}

export function facts(rows: [string, string][]): string {
  return `<dl class="facts">${rows.map(([k, v]) => `<dt>${escapeHtml(k)}</dt><dd>${escapeHtml(v)}</dd>`).join('')}</dl>`;
}

/** A sentence for the demand of a scenario in context.json. */
export function demandText(scenario: Json | undefined): string {
  const d = scenario?.demand;
  if (!d) return 'unknown (no context.json)';
  const mode = d.mode === 'round-trip' ? 'round trips (shelf to pick station and back)' : 'deliveries (pickup to drop)';
  if (d.kind === 'poisson') return `Poisson arrivals, ${d.tasksPerHour} tasks/h, ${mode}${Array.isArray(d.profile) ? `, hourly profile ${d.profile.join(', ')}` : ''}`;
  if (d.kind === 'saturated') return `saturated (a task always ready for every robot: capacity), ${mode}`;
  if (d.kind === 'trace') return `trace ${d.trace} (${d.tasks} tasks), ${mode}`;
  return String(d.kind);
}

export function provenance(context: (RunContext & Partial<SweepContext>) | null, folderName: string): string {
  if (!context) {
    return `<footer id="provenance"><p>Made by fleetwright from the results folder ${escapeHtml(folderName)}, which holds no context.json: the command, scenario hash and version that produced it are unknown.</p></footer>`;
  }
  const sweep = typeof context.planSha256 === 'string';
  const rows = [
    `<dt>command</dt><dd><code data-field="command">${escapeHtml(context.command)}</code></dd>`,
    ...(Array.isArray(context.shardCommands) ? [`<dt>merged from</dt><dd>${context.shardCommands.map((c) => `<code>${escapeHtml(c)}</code>`).join('<br>')}</dd>`] : []),
    ...(sweep ? [`<dt>sweep plan</dt><dd>${escapeHtml(context.sweepFile ?? '')}, SHA-256 <code data-field="planSha256">${escapeHtml(context.planSha256)}</code> (of its run ids, which hash every point's resolved scenario)</dd>`] : []),
    `<dt>scenario file</dt><dd>${escapeHtml(context.scenarioFile ?? '(built in code)')}</dd>`,
    `<dt>scenario SHA-256</dt><dd><code data-field="scenarioSha256">${escapeHtml(context.scenarioSha256)}</code> (${sweep ? 'of the scenario as its file has it, before the plan’s values' : 'of the scenario with every command-line override applied'})</dd>`,
    `<dt>fleetwright</dt><dd data-field="fleetwrightVersion">${escapeHtml(context.fleetwrightVersion)}</dd>`,
  ];
  return `<footer id="provenance"><dl class="facts">\n${rows.join('\n')}\n</dl></footer>`;
}
