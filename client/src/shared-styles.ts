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
