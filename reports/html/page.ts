/**
 * The document shell shared by the report and the replay viewer: one self-contained HTML
 * file (styles and scripts inline, no network), a Content-Security-Policy that allows only
 * the page's own inline scripts by their SHA-256 hashes (so markup injected through data
 * could not run even if escaping failed), screen and A4 print styles, and the safety note.
 */
import { createHash } from 'node:crypto';
import { escapeHtml } from './escape.ts';

export interface PageParts {
  title: string;
  /** Markup of the page body (already escaped where it carries data). */
  body: string;
  /** Inline scripts, each allowed by its hash; none for the report. */
  scripts?: string[];
  /** JSON data blocks: id -> text already made safe with jsonForScript. */
  data?: Record<string, string>;
  extraStyle?: string;
}

export const baseStyle = `
:root { --ink: #111; --muted: #555; --rule: #d0d0d0; --panel: #f5f5f2; --accent: #b34700; }
* { box-sizing: border-box; }
html { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", sans-serif; color: var(--ink); background: #fff; }
body { margin: 0 auto; max-width: 1000px; padding: 24px 28px 48px; }
h1 { font-size: 1.6rem; margin: 0 0 4px; letter-spacing: -0.01em; }
h2 { font-size: 1.2rem; margin: 32px 0 8px; padding-top: 8px; border-top: 2px solid var(--ink); }
h3 { font-size: 1rem; margin: 0 0 2px; }
p { margin: 4px 0 8px; }
.subtitle { color: var(--muted); margin: 0 0 16px; }
.safety { border-left: 4px solid var(--ink); background: var(--panel); padding: 8px 12px; margin: 16px 0; font-size: 0.9rem; }
.cards { display: grid; grid-template-columns: repeat(auto-fit, minmax(180px, 1fr)); gap: 10px; margin: 12px 0; }
.card { border: 1px solid var(--rule); padding: 8px 10px; }
.card .label { font-size: 0.8rem; color: var(--muted); }
.card .value { font-size: 1.35rem; font-weight: 600; font-variant-numeric: tabular-nums; }
.card .unit { font-size: 0.8rem; color: var(--muted); }
.warning { border: 2px solid var(--accent); padding: 6px 10px; margin: 8px 0; font-weight: 600; }
figure.chart { margin: 18px 0 26px; }
figure.chart figcaption p { color: var(--muted); font-size: 0.88rem; }
.plot svg { max-width: 100%; height: auto; }
.plot-row { display: flex; align-items: flex-start; }
.plot-row > svg { flex: 0 1 auto; min-width: 0; }
table.data { border-collapse: collapse; font-size: 0.8rem; margin: 6px 0; font-variant-numeric: tabular-nums; }
table.data caption { text-align: left; font-weight: 600; padding-bottom: 2px; }
table.data th, table.data td { border-bottom: 1px solid var(--rule); padding: 2px 8px; text-align: left; }
table.data .num { text-align: right; }
table.data thead th { border-bottom: 1.5px solid var(--ink); }
.table-note { font-size: 0.78rem; color: var(--muted); }
.table-parts { display: flex; flex-wrap: wrap; gap: 0 22px; align-items: flex-start; }
.tables { display: flex; flex-direction: column; gap: 10px; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 2px 14px; font-size: 0.9rem; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; }
code, .mono { font-family: ui-monospace, "SF Mono", Menlo, Consolas, monospace; font-size: 0.85em; word-break: break-all; }
footer { margin-top: 36px; border-top: 1px solid var(--rule); padding-top: 8px; font-size: 0.82rem; color: var(--muted); }
@media print {
  @page { size: A4; margin: 14mm 12mm; }
  html { font-size: 10.5pt; }
  body { max-width: none; padding: 0; }
  h2 { break-after: avoid; }
  figure.chart .plot, .cards, table.data, .safety, dl.facts { break-inside: avoid; }
  figure.chart figcaption { break-after: avoid; }
  * { print-color-adjust: exact; -webkit-print-color-adjust: exact; }
  .no-print { display: none !important; }
  a { color: inherit; text-decoration: none; }
}
`;

export function scriptHash(source: string): string {
  return `'sha256-${createHash('sha256').update(source, 'utf8').digest('base64')}'`;
}

export function htmlPage(parts: PageParts): string {
  const scripts = parts.scripts ?? [];
  const scriptPolicy = scripts.length > 0 ? `script-src ${scripts.map(scriptHash).join(' ')}` : `script-src 'none'`;
  // default-src 'none' also forbids fetch, images from URLs, fonts and frames: the page cannot reach any network.
  const csp = `default-src 'none'; ${scriptPolicy}; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'`;
  const data = Object.entries(parts.data ?? {})
    .map(([id, json]) => `<script type="application/json" id="${escapeHtml(id)}">${json}</script>`)
    .join('\n');
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="fleetwright">
<title>${escapeHtml(parts.title)}</title>
<style>${baseStyle}${parts.extraStyle ?? ''}</style>
</head>
<body>
${parts.body}
${data}
${scripts.map((s) => `<script>${s}</script>`).join('\n')}
</body>
</html>
`;
}
