/**
 * The report's style sheet: our own neutral, paper-like look. Self-contained (no web fonts, no external files).
 */
import { theme } from './theme.ts';

export const REPORT_CSS = `
:root { --paper: ${theme.paper}; --panel: ${theme.panel}; --ink: ${theme.ink}; --muted: ${theme.muted};
  --rule: ${theme.rule}; --faint: ${theme.faint}; --accent: #7a4f1d; --warn: #8c2f17; }
* { box-sizing: border-box; }
html { background: #e9e6df; }
body { margin: 0 auto; max-width: 1120px; padding: 28px 40px 60px; background: var(--paper); color: var(--ink);
  font: 14px/1.5 ${theme.font}; box-shadow: 0 0 0 1px var(--rule); min-height: 100vh; }
header.run { border-bottom: 3px double var(--rule); padding-bottom: 14px; margin-bottom: 18px; }
header.run .kicker { font-size: 11px; letter-spacing: 0.14em; text-transform: uppercase; color: var(--muted); }
h1 { font-size: 26px; margin: 4px 0 6px; font-weight: bold; letter-spacing: -0.01em; }
h2 { font-size: 18px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 1px solid var(--rule); }
h3 { font-size: 15px; margin: 22px 0 8px; color: var(--accent); }
p.lead { margin: 0; color: var(--muted); max-width: 80ch; }
nav.toc { font-size: 13px; margin: 12px 0 0; display: flex; flex-wrap: wrap; gap: 4px 14px; }
nav.toc a { color: var(--ink); }
a { color: var(--accent); text-decoration-thickness: 1px; text-underline-offset: 2px; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 18px; margin: 0; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; font-variant-numeric: tabular-nums; overflow-wrap: anywhere; }
.caution { border-left: 4px solid var(--accent); background: var(--panel); padding: 10px 16px; margin: 18px 0; }
.caution h2 { border: 0; margin: 0 0 6px; font-size: 15px; padding: 0; }
.caution ul { margin: 0; padding-left: 18px; }
ul.warnings li { color: var(--warn); }
table { border-collapse: collapse; margin: 6px 0 4px; font-size: 12.5px; font-variant-numeric: tabular-nums; }
th, td { padding: 3px 10px; border-bottom: 1px solid var(--faint); text-align: left; vertical-align: top; }
th { border-bottom: 1px solid var(--ink); font-weight: bold; white-space: nowrap; background: var(--paper); }
td.num, th.num { text-align: right; white-space: nowrap; }
td.long { min-width: 32em; }
.scroll td:not(.long) { white-space: nowrap; }
table.accounting th { vertical-align: bottom; }
th.group { text-align: center; border-bottom: 1px solid var(--rule); font-weight: normal; color: var(--muted); }
th.reason { white-space: normal; font-weight: normal; max-width: 9em; vertical-align: bottom; }
tr.total td { border-top: 1px solid var(--ink); font-weight: bold; }
/* Tables keep every row: wide or long ones scroll inside their frame (header row stays on top). */
.scroll { overflow: auto; max-width: 100%; max-height: 32em; border: 1px solid var(--faint); margin: 6px 0 4px; }
.scroll table { margin: 0; }
.scroll thead th { position: sticky; top: 0; z-index: 1; }
.scroll table.accounting thead th { position: static; }
details.fold { margin: 8px 0; border-top: 1px solid var(--faint); }
details.fold > summary { cursor: pointer; padding: 6px 0; font-weight: bold; }
.note { color: var(--muted); font-size: 12.5px; }
.ok { color: #2d6a3e; }
.bad { color: var(--warn); font-weight: bold; }
/* Figures at the full width of the page, so their tick labels read at print size. */
figure { margin: 14px 0 22px; padding: 0; background: #ffffff; border: 1px solid var(--faint); }
figure img { display: block; width: 100%; height: auto; margin: 0; }
figcaption { padding: 4px 8px 6px; }
figcaption { font-size: 12.5px; color: var(--muted); margin-top: 6px; }
.gallery { display: grid; grid-template-columns: 1fr; gap: 0; }
details { margin: 8px 0; }
summary { cursor: pointer; color: var(--accent); }
pre { background: var(--panel); padding: 10px 12px; overflow: auto; font-size: 12px; max-height: 520px; }
code { font-family: 'DejaVu Sans Mono', monospace; font-size: 12px; }
footer { margin-top: 40px; padding-top: 10px; border-top: 1px solid var(--rule); color: var(--muted); font-size: 12px; }
@media print { html { background: none; } body { box-shadow: none; max-width: none; } figure { break-inside: avoid; }
  .scroll { max-height: none; overflow: visible; } }
`;
