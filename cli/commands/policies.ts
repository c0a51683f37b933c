/** `fleetwright policies`: every policy, one line each, with its options, defaults and units. */
import { policies } from '../../policies/registry.ts';
import { toJson } from '../../reports/summary.ts';

export function policiesCommand(json: boolean): void {
  if (json) {
    process.stdout.write(`${toJson(policies.map((p) => ({ name: p.name, summary: p.summary, source: p.source, options: p.optionDocs })))}\n`);
    return;
  }
  const width = Math.max(...policies.map((p) => p.name.length));
  const lines: string[] = [];
  for (const p of policies) {
    lines.push(`${p.name.padEnd(width)}  ${p.summary} [${p.source}]`);
    for (const option of p.optionDocs) {
      lines.push(`${' '.repeat(width)}    policy.${option.name} = ${option.default} ${option.unit}: ${option.description}`);
    }
  }
  lines.push('', 'Choose one with --policy NAME or `policy: { name: NAME, <option>: <value> }` in the scenario.');
  process.stdout.write(`${lines.join('\n')}\n`);
}
