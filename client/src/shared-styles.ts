import { css } from 'lit';

/*
 * Styles that several elements share, written once. An element lists the shared block first and its
 * own rules after it (`static styles = [sharedBlock, css`…`]`), so its own rules win a tie.
 */

/** An editor part: a collapsible list (details, summary), its hint line and the invalid-field mark (sn-editor, sn-dynamics-panel). */
export const editorPartStyles = css`
  :host { display: block; }
  details { border-top: 1px solid #dcd7cd; padding: 6px 0 8px; }
  summary { cursor: pointer; font-weight: 600; color: #1d3a4a; padding: 2px 0; user-select: none; }
  .hint { color: #6b665e; font-size: 12px; margin: 2px 0 6px; }
  .invalid { border-color: #b3261e; background: #fdf0ef; }
`;

/** Result tables and their headings: numbers aligned, an over-limit row marked, pass and fail words (sn-results, sn-dynamics-results). */
export const resultTableStyles = css`
  :host { display: block; }
  h3 { font-size: 14px; margin: 14px 0 4px; color: #1d3a4a; }
  h4 { font-size: 13px; margin: 10px 0 2px; color: #1d3a4a; }
  table { border-collapse: collapse; font-size: 13px; margin-bottom: 4px; }
  th { text-align: left; font-size: 12px; color: #4a5258; font-weight: 600; padding: 2px 8px 2px 0; border-bottom: 1px solid #dcd7cd; white-space: nowrap; }
  td { padding: 2px 8px 2px 0; border-bottom: 1px solid #ece8e0; white-space: nowrap; }
  td.num { text-align: right; font-variant-numeric: tabular-nums; }
  tr.over td { background: #fdf0ef; font-weight: 600; }
  tr.over td:first-child { box-shadow: inset 4px 0 0 #8c1d18; padding-left: 6px; }
  .fail { color: #b3261e; font-weight: 600; }
  .ok { color: #1f5a3a; }
  .muted { color: #6b665e; font-size: 12px; }
  .wide { overflow-x: auto; max-width: 100%; }
  .nowrap { white-space: nowrap; }
  .picker select { font: inherit; margin-left: 6px; }
`;

/** An SVG chart: scaled to its box, tick labels and the title (sn-plot, sn-dynamics-chart). */
export const chartStyles = css`
  :host { display: block; }
  svg { width: 100%; height: auto; display: block; font-family: system-ui, sans-serif; }
  .tick { font-size: 11px; fill: #6b665e; }
  .title { font-size: 12.5px; font-weight: 600; fill: #1d3a4a; }
`;
