/**
 * The table's style sheet, inlined into the bundle so that one file is all
 * the widget needs. Every colour other than the four state colours comes
 * from a JupyterLab variable with a fallback, so the table follows light
 * and dark themes in JupyterLab, Notebook 7 and VS Code.
 *
 * Each state is told apart by more than colour: a badge with the state
 * word and the style of the row's left border (flagged solid, marked
 * double, kept dashed, missing dotted).
 */
export const CSS = `
.sl-table {
  --sl-flagged: #C8571B;
  --sl-marked: #1F4E9C;
  --sl-kept: #1B8A7A;
  --sl-missing: #8A8F98;
  --sl-accent: var(--jp-brand-color1, #2a73c5);
  --sl-line: var(--jp-border-color2, #d4d4d4);
  --sl-bg: var(--jp-layout-color1, #ffffff);
  --sl-bg-alt: var(--jp-layout-color2, #f2f2f2);
  --sl-fg: var(--jp-ui-font-color1, rgba(0, 0, 0, 0.87));
  --sl-fg-dim: var(--jp-ui-font-color2, rgba(0, 0, 0, 0.6));
  box-sizing: border-box;
  max-width: 100%;
  color: var(--sl-fg);
  background: var(--sl-bg);
  font-family: var(--jp-ui-font-family, system-ui, -apple-system, "Segoe UI", sans-serif);
  font-size: var(--jp-ui-font-size1, 13px);
  line-height: 1.4;
}
.sl-table *, .sl-table *::before, .sl-table *::after { box-sizing: inherit; }
.sl-table [hidden] { display: none !important; }

.sl-bar {
  display: flex;
  flex-wrap: wrap;
  align-items: center;
  gap: 6px 14px;
  padding: 4px 0 6px;
}
.sl-counts { display: flex; flex-wrap: wrap; gap: 4px 12px; margin: 0; padding: 0; }
.sl-count { display: inline-flex; align-items: baseline; gap: 4px; white-space: nowrap; }
.sl-count-num { font-weight: 600; font-variant-numeric: tabular-nums; }
.sl-count-label { color: var(--sl-fg-dim); }
.sl-count[data-count="flagged"], .sl-count[data-count="marked"],
.sl-count[data-count="kept"], .sl-count[data-count="missing"] {
  padding-left: 6px;
  border-left: 4px solid var(--sl-state-colour, transparent);
}
.sl-count[data-count="flagged"] { --sl-state-colour: var(--sl-flagged); border-left-style: solid; }
.sl-count[data-count="marked"] { --sl-state-colour: var(--sl-marked); border-left-style: double; }
.sl-count[data-count="kept"] { --sl-state-colour: var(--sl-kept); border-left-style: dashed; }
.sl-count[data-count="missing"] { --sl-state-colour: var(--sl-missing); border-left-style: dotted; }

.sl-view-label { display: inline-flex; align-items: center; gap: 6px; color: var(--sl-fg-dim); }
.sl-table select, .sl-table button, .sl-table input {
  font: inherit;
  color: var(--jp-ui-font-color1, inherit);
  background: var(--jp-layout-color1, #ffffff);
  border: 1px solid var(--jp-border-color1, #bdbdbd);
  border-radius: 2px;
}
.sl-table select { padding: 1px 4px; }
.sl-table button { padding: 0 6px; cursor: pointer; line-height: 1.5; }
.sl-table button:hover:not(:disabled) { background: var(--jp-layout-color2, #eeeeee); }
.sl-table button:disabled { opacity: 0.45; cursor: default; }
.sl-table button:focus-visible, .sl-table select:focus-visible,
.sl-table input:focus-visible, .sl-table th[tabindex]:focus-visible {
  outline: 2px solid var(--sl-accent);
  outline-offset: 1px;
}

.sl-caution { margin: 0 0 4px; color: var(--sl-fg-dim); font-style: italic; }
.sl-busy {
  display: inline-block;
  margin: 0 0 4px;
  padding: 0 6px;
  border-left: 3px solid var(--sl-accent);
  color: var(--sl-fg);
}
.sl-error {
  margin: 0 0 6px;
  padding: 4px 8px;
  border: 1px solid var(--jp-error-color1, #d32f2f);
  border-left-width: 4px;
  background: var(--jp-layout-color2, #f5f5f5);
  color: var(--jp-ui-font-color1, #000000);
  white-space: pre-wrap;
  overflow-wrap: anywhere;
}
.sl-columns-note { margin: 0 0 4px; color: var(--sl-fg-dim); }

.sl-scroll {
  max-width: 100%;
  max-height: 32em;
  overflow: auto;
  border: 1px solid var(--sl-line);
}
.sl-grid { border-collapse: separate; border-spacing: 0; width: max-content; min-width: 100%; }
.sl-grid th, .sl-grid td {
  max-width: 22ch;
  padding: 2px 8px;
  border-bottom: 1px solid var(--sl-line);
  text-align: left;
  vertical-align: middle;
  white-space: nowrap;
  overflow: hidden;
  text-overflow: ellipsis;
}
.sl-grid thead th {
  position: sticky;
  top: 0;
  z-index: 2;
  background: var(--sl-bg-alt);
  font-family: inherit;
  font-size: inherit;
  font-weight: 600;
  user-select: none;
}
.sl-grid thead th.sl-sortable { cursor: pointer; }
.sl-sort-mark { display: inline-block; min-width: 1.2em; padding-left: 2px; color: var(--sl-accent); }
.sl-grid th.sl-label {
  position: sticky;
  left: 0;
  z-index: 1;
  background: var(--sl-bg);
  font-weight: normal;
  font-family: var(--jp-code-font-family, ui-monospace, monospace);
}
.sl-grid thead th.sl-label { z-index: 3; background: var(--sl-bg-alt); font-family: inherit; }
.sl-num, .sl-cell {
  font-family: var(--jp-code-font-family, ui-monospace, monospace);
  font-size: var(--jp-code-font-size, 13px);
}
.sl-num { text-align: right; font-variant-numeric: tabular-nums; }
.sl-grid td.sl-reason { max-width: 30ch; }
.sl-grid td.sl-actions { max-width: none; overflow: visible; }
.sl-actions button + button { margin-left: 3px; }
.sl-grid td.sl-note-cell { max-width: none; padding-top: 1px; padding-bottom: 1px; }
.sl-note { width: 18ch; padding: 0 4px; }

.sl-row { cursor: pointer; }
.sl-grid .sl-row:hover > * { background-color: var(--jp-layout-color2, #f5f5f5); }
.sl-row > th.sl-label { border-left: 4px solid transparent; }
.sl-state-flagged > th.sl-label { border-left: 4px solid var(--sl-flagged); }
.sl-state-marked > th.sl-label { border-left: 4px double var(--sl-marked); }
.sl-state-kept > th.sl-label { border-left: 4px dashed var(--sl-kept); }
.sl-state-missing > th.sl-label { border-left: 4px dotted var(--sl-missing); }

.sl-badge {
  display: inline-block;
  padding: 0 6px;
  border: 1px solid var(--sl-badge-colour, var(--sl-line));
  border-left-width: 4px;
  border-radius: 2px;
  background: transparent;
  background: color-mix(in srgb, var(--sl-badge-colour, transparent) 16%, transparent);
  color: var(--sl-fg);
  font-size: 0.92em;
  line-height: 1.35;
}
.sl-badge-flagged { --sl-badge-colour: var(--sl-flagged); border-left-style: solid; }
.sl-badge-marked { --sl-badge-colour: var(--sl-marked); border-left-style: double; }
.sl-badge-kept { --sl-badge-colour: var(--sl-kept); border-left-style: dashed; }
.sl-badge-missing { --sl-badge-colour: var(--sl-missing); border-left-style: dotted; }

.sl-grid .sl-row.sl-brushed > * {
  background-color: var(--jp-layout-color3, #e4e4e4);
  background-color: color-mix(in srgb, var(--sl-accent) 18%, var(--sl-bg));
}
.sl-row.sl-focused > * {
  box-shadow: inset 0 2px 0 var(--sl-accent), inset 0 -2px 0 var(--sl-accent);
}
.sl-empty td { color: var(--sl-fg-dim); font-style: italic; cursor: default; }

.sl-pager { display: flex; align-items: center; gap: 8px; padding: 6px 0 2px; }
.sl-range { color: var(--sl-fg-dim); font-variant-numeric: tabular-nums; }
`;
