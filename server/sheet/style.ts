/**
 * The calculation sheet's style sheet: print-ready on A4 and on Letter (the page box follows the
 * printer's paper; the text block fits the narrower A4 width), system fonts only, no asset.
 */
export const SHEET_CSS = `
@page { size: auto; margin: 16mm 15mm 18mm; }
* { box-sizing: border-box; }
html { font: 10pt/1.35 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif; color: #111; background: #fff; }
body { margin: 0 auto; max-width: 180mm; padding: 8mm 0; }
h1 { font-size: 16pt; margin: 0 0 2mm; }
body { counter-reset: part; }
h2::before { counter-increment: part; content: counter(part) ". "; }
h2 { font-size: 12pt; margin: 6mm 0 2mm; border-bottom: 0.4pt solid #444; break-after: avoid; }
h3 { font-size: 10.5pt; margin: 4mm 0 1mm; break-after: avoid; }
p { margin: 1mm 0; }
.eq { font-family: ui-monospace, "SFMono-Regular", Menlo, Consolas, monospace; font-size: 8.6pt; margin: 0.6mm 0 0.6mm 4mm; overflow-wrap: anywhere; }
.eq .at { font-family: inherit; color: #555; }
.muted { color: #555; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 3mm; font-size: 8.6pt; }
thead { display: table-header-group; }
tr { break-inside: avoid; }
th, td { border: 0.4pt solid #999; padding: 0.6mm 1.2mm; text-align: left; vertical-align: top; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
table.big { break-before: page; }
.head td { border: none; padding: 0.3mm 2mm 0.3mm 0; }
.hash { font-family: ui-monospace, Menlo, Consolas, monospace; font-size: 8pt; overflow-wrap: anywhere; }
.pass { color: #1b5e20; font-weight: 600; }
.fail { color: #b71c1c; font-weight: 600; }
.segment { break-inside: avoid; margin-bottom: 2mm; }
.signoff td { height: 12mm; }
.cautions li { margin: 1mm 0; }
@media screen { body { padding: 10mm 6mm; } }
`;
