/**
 * The table of rows in context.
 *
 * It draws what Python sends and sends requests back; it computes nothing
 * and never sets a trait itself. All user data reaches the page through
 * `textContent`, `value` or `setAttribute`, never as markup.
 */
import { groupDigits, hasNextPage, rangeText } from "./format";
import { CSS } from "./styles";
import {
  type Counts,
  LABEL_COLUMN,
  type Request,
  type Row,
  type RowAction,
  type RowState,
  SCORE_COLUMN,
  STATE_COLUMN,
  STATES,
  type TableModel,
  type TableTraits,
  VIEWS,
} from "./types";

/** Counters in the header bar: which count, and the word after the number. */
const COUNTERS: ReadonlyArray<readonly [keyof Counts, string]> = [
  ["rows", "rows"],
  ["flagged", "flagged"],
  ["marked", "marked"],
  ["kept", "kept"],
  ["missing", "missing"],
  ["mask", "in mask"],
];

/** The hand decisions offered on every row: action sent, button text. */
const ACTIONS: ReadonlyArray<readonly [Exclude<RowAction, "focus">, string]> = [
  ["mark", "Mark"],
  ["keep", "Keep"],
  ["clear", "Clear"],
];

/** Cells before the data columns (label, state, actions, score, reason) and after (note). */
const FIXED_COLUMNS = 6;

const ARROW_UP = "\u25B2";
const ARROW_DOWN = "\u25BC";

/** Anything as display text: Python sends strings, but never trust the shape. */
function asText(value: unknown): string {
  if (value === null || value === undefined) return "";
  return typeof value === "string" ? value : String(value);
}

function asArray<T>(value: unknown): T[] {
  return Array.isArray(value) ? (value as T[]) : [];
}

function asState(value: unknown): RowState {
  return (STATES as readonly string[]).includes(value as string) ? (value as RowState) : "";
}

function isRowId(value: unknown): value is number {
  return typeof value === "number" && Number.isInteger(value);
}

function elementOf(target: EventTarget | null): Element | null {
  const maybe = target as Element | null;
  return maybe && typeof maybe.closest === "function" ? maybe : null;
}

/** Render the table into `el`; returns the cleanup that undoes it. */
export function mountTable(model: TableModel, el: HTMLElement): () => void {
  const doc = el.ownerDocument;

  function make<K extends keyof HTMLElementTagNameMap>(
    tag: K,
    attrs: Record<string, string> = {},
    text?: string,
  ): HTMLElementTagNameMap[K] {
    const node = doc.createElement(tag);
    for (const [name, value] of Object.entries(attrs)) node.setAttribute(name, value);
    if (text !== undefined) node.textContent = text;
    return node;
  }

  /** A text cell that truncates visually and keeps the whole text in its title. */
  function textCell<K extends "td" | "th">(tag: K, className: string, text: string) {
    const cell = make(tag, { class: className, dir: "auto" }, text);
    if (text) cell.setAttribute("title", text);
    return cell;
  }

  const send = (request: Request): void => model.send(request);
  const get = <K extends keyof TableTraits>(key: K): TableTraits[K] => model.get(key);

  // ---- static structure -------------------------------------------------

  const root = make("div", { class: "sl-table", "data-strayline": "table" });
  const style = make("style", {}, CSS);

  const bar = make("div", { class: "sl-bar" });
  const countsBox = make("div", { class: "sl-counts", "data-role": "counts" });
  const countNumbers = new Map<keyof Counts, HTMLElement>();
  for (const [key, word] of COUNTERS) {
    const counter = make("span", { class: "sl-count", "data-count": key });
    const number = make("span", { class: "sl-count-num" }, "0");
    counter.append(number, " ", make("span", { class: "sl-count-label" }, word));
    countNumbers.set(key, number);
    countsBox.append(counter);
  }
  const viewLabel = make("label", { class: "sl-view-label" }, "Show");
  const viewSelect = make("select", { "data-role": "view" });
  for (const [value, text] of VIEWS) viewSelect.append(make("option", { value }, text));
  viewLabel.append(viewSelect);
  bar.append(countsBox, viewLabel);

  const caution = make("p", { class: "sl-caution", "data-role": "caution" });
  const busy = make("div", { class: "sl-busy", "data-role": "busy", "aria-live": "polite" });
  const error = make("div", { class: "sl-error", "data-role": "error", role: "alert" });
  const columnsNote = make("p", { class: "sl-columns-note", "data-role": "columns-note" });

  const scroll = make("div", { class: "sl-scroll" });
  const table = make("table", { class: "sl-grid", "aria-label": "Rows in context" });
  const thead = make("thead");
  const tbody = make("tbody");
  table.append(thead, tbody);
  scroll.append(table);

  const pager = make("div", { class: "sl-pager" });
  const prev = make("button", { type: "button", "data-role": "prev" }, "Previous");
  const range = make("span", { class: "sl-range", "data-role": "range" });
  const next = make("button", { type: "button", "data-role": "next" }, "Next");
  pager.append(prev, range, next);

  root.append(style, bar, caution, busy, error, columnsNote, scroll, pager);
  el.append(root);

  // ---- per-render state ---------------------------------------------------

  /** Body rows by row id, rebuilt with the body. */
  const rowElements = new Map<number, HTMLTableRowElement>();
  const rowData = new WeakMap<Element, Row>();
  /** Sortable header cells and the sort name each sends. */
  const sortHeaders: Array<[HTMLTableCellElement, string]> = [];
  /** The note text last sent (or received) for each note input. */
  const sentNotes = new WeakMap<HTMLInputElement, string>();
  /** Notes being typed, by row id, so a redraw mid-typing keeps them. */
  const drafts = new Map<number, string>();
  let focusedRow: HTMLTableRowElement | null = null;
  /** True while the body is being replaced: focus leaving a removed input is no commit. */
  let drawing = false;
  let scrolledToFocus = -1;

  // ---- drawing ------------------------------------------------------------

  function drawHeader(): void {
    sortHeaders.length = 0;
    const tr = make("tr");
    const sortable = (name: string, text: string, className = ""): HTMLTableCellElement => {
      const th = make("th", {
        class: `sl-sortable ${className}`.trim(),
        scope: "col",
        tabindex: "0",
        "data-column": name,
        "aria-sort": "none",
        dir: "auto",
      });
      th.setAttribute("title", text);
      th.append(
        make("span", { class: "sl-head-text" }, text),
        make("span", { class: "sl-sort-mark", "aria-hidden": "true" }),
      );
      sortHeaders.push([th, name]);
      return th;
    };
    tr.append(
      sortable(LABEL_COLUMN, "Row", "sl-label"),
      sortable(STATE_COLUMN, "State"),
      make("th", { scope: "col" }, "Decide"),
      sortable(SCORE_COLUMN, "Score", "sl-num"),
      make("th", { scope: "col" }, "Reason"),
    );
    for (const column of asArray<unknown>(get("columns"))) {
      tr.append(sortable(asText(column), asText(column)));
    }
    tr.append(make("th", { scope: "col" }, "Note"));
    thead.replaceChildren(tr);
    drawSortMarks();
  }

  function drawSortMarks(): void {
    const column = asText(get("sort_column"));
    const ascending = get("sort_ascending") !== false;
    for (const [th, name] of sortHeaders) {
      const sorted = column !== "" && name === column;
      th.setAttribute("aria-sort", sorted ? (ascending ? "ascending" : "descending") : "none");
      const mark = th.querySelector(".sl-sort-mark");
      if (mark) mark.textContent = sorted ? (ascending ? ARROW_UP : ARROW_DOWN) : "";
    }
  }

  function drawRow(row: Row, columnCount: number): HTMLTableRowElement {
    const state = asState(row.state);
    const label = asText(row.label);
    const tr = make("tr", {
      class: `sl-row sl-state-${state || "none"}`,
      "data-id": String(row.id),
      "data-state": state,
    });
    rowData.set(tr, row);

    const labelCell = textCell("th", "sl-label", label);
    labelCell.setAttribute("scope", "row");

    const stateCell = make("td", { class: "sl-state-cell" });
    if (state) stateCell.append(make("span", { class: `sl-badge sl-badge-${state}` }, state));

    const actions = make("td", { class: "sl-actions" });
    for (const [action, text] of ACTIONS) {
      actions.append(
        make("button", { type: "button", "data-action": action, "aria-label": `${text} row ${label}` }, text),
      );
    }

    tr.append(
      labelCell,
      stateCell,
      actions,
      textCell("td", "sl-num", asText(row.score)),
      textCell("td", "sl-reason", asText(row.reason)),
    );

    const cells = asArray<unknown>(row.cells);
    for (let i = 0; i < columnCount; i++) tr.append(textCell("td", "sl-cell", asText(cells[i])));

    const noteCell = make("td", { class: "sl-note-cell" });
    const note = make("input", {
      type: "text",
      class: "sl-note",
      "data-role": "note",
      dir: "auto",
      placeholder: "note",
      "aria-label": `Note for row ${label}`,
    });
    const saved = asText(row.note);
    const draft = drafts.get(row.id);
    note.value = draft ?? saved;
    sentNotes.set(note, saved);
    if (draft === saved) drafts.delete(row.id);
    noteCell.append(note);
    tr.append(noteCell);
    return tr;
  }

  function drawBody(): void {
    const restoreFocus = keepKeyboardFocus();
    const rows = asArray<Row>(get("rows")).filter((row) => row && isRowId(row.id));
    const columnCount = asArray(get("columns")).length;

    // A note typed into a row that is leaving the page is saved, not lost.
    const ids = new Set(rows.map((row) => row.id));
    for (const [id, text] of [...drafts]) {
      if (!ids.has(id)) {
        drafts.delete(id);
        send({ kind: "note", id, text });
      }
    }

    rowElements.clear();
    focusedRow = null;
    const fragment = doc.createDocumentFragment();
    for (const row of rows) {
      const tr = drawRow(row, columnCount);
      rowElements.set(row.id, tr);
      fragment.append(tr);
    }
    if (rows.length === 0) {
      const tr = make("tr", { class: "sl-empty" });
      tr.append(
        make("td", { colspan: String(FIXED_COLUMNS + columnCount) }, "No rows in this view."),
      );
      fragment.append(tr);
    }
    drawing = true;
    try {
      tbody.replaceChildren(fragment);
    } finally {
      drawing = false;
    }
    drawFocus();
    drawBrushed();
    restoreFocus();
  }

  /**
   * Remember which row control has the keyboard focus, so that a redraw
   * (say after pressing "Mark") puts it back on the same control.
   */
  function keepKeyboardFocus(): () => void {
    const active = doc.activeElement;
    if (!active || !tbody.contains(active)) return () => {};
    const tr = active.closest("tr.sl-row");
    const row = tr ? rowData.get(tr) : undefined;
    if (!tr || !row) return () => {};
    const index = Array.prototype.indexOf.call(tbody.children, tr) as number;
    const action = active.getAttribute("data-action");
    let selector: string;
    if (ACTIONS.some(([name]) => name === action)) selector = `button[data-action="${action}"]`;
    else if (active.getAttribute("data-role") === "note") selector = 'input[data-role="note"]';
    else return () => {};
    const input = active as HTMLInputElement;
    const selection = selector.startsWith("input") ? [input.selectionStart, input.selectionEnd] : null;
    return () => {
      const rows = tbody.querySelectorAll<HTMLTableRowElement>("tr.sl-row");
      const target = rowElements.get(row.id) ?? rows[Math.min(index, rows.length - 1)];
      const control = target?.querySelector<HTMLElement>(selector);
      if (!control) return;
      control.focus({ preventScroll: true });
      if (selection && "setSelectionRange" in control) {
        try {
          (control as HTMLInputElement).setSelectionRange(selection[0], selection[1]);
        } catch {
          // Some input types refuse selection ranges; the focus is what matters.
        }
      }
    };
  }

  function drawFocus(): void {
    const focus = get("focus");
    const target = isRowId(focus) ? (rowElements.get(focus) ?? null) : null;
    if (focusedRow && focusedRow !== target) {
      focusedRow.classList.remove("sl-focused");
      focusedRow.removeAttribute("aria-current");
    }
    focusedRow = target;
    if (!target) return;
    target.classList.add("sl-focused");
    target.setAttribute("aria-current", "true");
    if (focus !== scrolledToFocus) {
      scrolledToFocus = focus;
      revealInScroll(target);
    }
  }

  /** Scroll the table's own box (never the notebook) so the row is in sight. */
  function revealInScroll(tr: HTMLTableRowElement): void {
    const box = scroll.getBoundingClientRect();
    const place = tr.getBoundingClientRect();
    if (box.height === 0) return; // not laid out (hidden output, tests)
    const header = thead.getBoundingClientRect().height;
    if (place.top < box.top + header) scroll.scrollTop -= box.top + header - place.top;
    else if (place.bottom > box.bottom) scroll.scrollTop += place.bottom - box.bottom;
  }

  function drawBrushed(): void {
    const brushed = new Set(asArray<unknown>(get("brushed")).filter(isRowId));
    for (const [id, tr] of rowElements) tr.classList.toggle("sl-brushed", brushed.has(id));
  }

  function drawCounts(): void {
    const counts = (get("counts") ?? {}) as Partial<Counts>;
    for (const [key, number] of countNumbers) {
      number.textContent = groupDigits(Number(counts[key]));
    }
  }

  function drawView(): void {
    const view = asText(get("view"));
    if (VIEWS.some(([value]) => value === view)) viewSelect.value = view;
  }

  function drawPager(): void {
    const page = Number(get("page"));
    const size = Number(get("page_size"));
    const total = Number(get("total"));
    range.textContent = rangeText(page, size, total);
    prev.disabled = !(page > 0);
    next.disabled = !hasNextPage(page, size, total);
  }

  function drawBusy(): void {
    const on = get("busy") === true;
    busy.hidden = !on;
    busy.textContent = on ? "Working\u2026" : "";
    root.setAttribute("aria-busy", on ? "true" : "false");
  }

  function drawLine(node: HTMLElement, key: "error" | "caution" | "columns_note"): void {
    const text = asText(get(key));
    node.textContent = text;
    node.hidden = text === "";
  }

  // ---- requests -----------------------------------------------------------

  function requestSort(column: string): void {
    const current = asText(get("sort_column"));
    const ascending = current === column ? !(get("sort_ascending") !== false) : true;
    send({ kind: "sort", column, ascending });
  }

  function requestRow(tr: Element, action: RowAction): void {
    const row = rowData.get(tr);
    if (row) send({ kind: "row", action, id: row.id });
  }

  function commitNote(input: HTMLInputElement): void {
    const tr = input.closest("tr.sl-row");
    const row = tr ? rowData.get(tr) : undefined;
    if (!row) return;
    drafts.delete(row.id);
    const text = input.value;
    if (sentNotes.get(input) === text) return;
    sentNotes.set(input, text);
    send({ kind: "note", id: row.id, text });
  }

  const isActivationKey = (event: KeyboardEvent): boolean =>
    event.key === "Enter" || event.key === " " || event.key === "Spacebar";

  function headerFor(target: EventTarget | null): string | undefined {
    const th = elementOf(target)?.closest("th[data-column]");
    return sortHeaders.find(([cell]) => cell === th)?.[1];
  }

  function actionButton(target: EventTarget | null): HTMLButtonElement | null {
    const button = elementOf(target)?.closest<HTMLButtonElement>("button[data-action]");
    return button && tbody.contains(button) ? button : null;
  }

  function noteInput(target: EventTarget | null): HTMLInputElement | null {
    const input = elementOf(target)?.closest<HTMLInputElement>('input[data-role="note"]');
    return input && tbody.contains(input) ? input : null;
  }

  function pressAction(button: HTMLButtonElement): void {
    const action = button.getAttribute("data-action");
    const tr = button.closest("tr.sl-row");
    const known = ACTIONS.find(([name]) => name === action);
    if (tr && known && !button.disabled) requestRow(tr, known[0]);
  }

  // ---- DOM listeners ----------------------------------------------------

  const onHeaderClick = (event: MouseEvent): void => {
    const column = headerFor(event.target);
    if (column !== undefined) requestSort(column);
  };
  const onHeaderKey = (event: KeyboardEvent): void => {
    if (!isActivationKey(event)) return;
    const column = headerFor(event.target);
    if (column === undefined) return;
    event.preventDefault();
    if (!event.repeat) requestSort(column);
  };

  const onBodyClick = (event: MouseEvent): void => {
    const button = actionButton(event.target);
    if (button) {
      pressAction(button);
      return;
    }
    const target = elementOf(event.target);
    if (!target || target.closest("input, button, select, textarea, a, label")) return;
    const tr = target.closest("tr.sl-row");
    if (tr && tbody.contains(tr)) requestRow(tr, "focus");
  };
  // Keys on row buttons are handled here (and the browser's own click from
  // the same key press is cancelled), so each press sends exactly once.
  const onBodyKeyDown = (event: KeyboardEvent): void => {
    const button = actionButton(event.target);
    if (button && isActivationKey(event)) {
      event.preventDefault();
      if (!event.repeat) pressAction(button);
      return;
    }
    const input = noteInput(event.target);
    if (input && event.key === "Enter") {
      event.preventDefault();
      commitNote(input);
    }
  };
  const onBodyKeyUp = (event: KeyboardEvent): void => {
    if (actionButton(event.target) && (event.key === " " || event.key === "Spacebar")) {
      event.preventDefault();
    }
  };
  // "change" covers typing then leaving; "focusout" also covers a note that
  // was carried over a redraw, whose new input the user has not edited.
  const onBodyChange = (event: Event): void => {
    const input = noteInput(event.target);
    if (input && !drawing) commitNote(input);
  };
  const onBodyInput = (event: Event): void => {
    const input = noteInput(event.target);
    const row = input ? rowData.get(input.closest("tr.sl-row") as Element) : undefined;
    if (input && row) {
      if (input.value === sentNotes.get(input)) drafts.delete(row.id);
      else drafts.set(row.id, input.value);
    }
  };

  const onPrev = (): void => {
    if (!prev.disabled) send({ kind: "page", page: Number(get("page")) - 1 });
  };
  const onNext = (): void => {
    if (!next.disabled) send({ kind: "page", page: Number(get("page")) + 1 });
  };
  const onView = (): void => {
    const chosen = VIEWS.find(([value]) => value === viewSelect.value);
    if (chosen && chosen[0] !== get("view")) send({ kind: "view", value: chosen[0] });
  };

  const domListeners: Array<[EventTarget, string, EventListener]> = [
    [thead, "click", onHeaderClick as EventListener],
    [thead, "keydown", onHeaderKey as EventListener],
    [tbody, "click", onBodyClick as EventListener],
    [tbody, "keydown", onBodyKeyDown as EventListener],
    [tbody, "keyup", onBodyKeyUp as EventListener],
    [tbody, "change", onBodyChange],
    [tbody, "focusout", onBodyChange],
    [tbody, "input", onBodyInput],
    [prev, "click", onPrev],
    [next, "click", onNext],
    [viewSelect, "change", onView],
  ];
  for (const [target, type, listener] of domListeners) target.addEventListener(type, listener);

  // ---- model listeners --------------------------------------------------

  const onColumns = (): void => {
    drawHeader();
    drawBody();
  };
  const modelListeners: Array<[string, () => void]> = [
    ["change:columns", onColumns],
    ["change:rows", drawBody],
    ["change:sort_column", drawSortMarks],
    ["change:sort_ascending", drawSortMarks],
    ["change:page", drawPager],
    ["change:page_size", drawPager],
    ["change:total", drawPager],
    ["change:view", drawView],
    ["change:counts", drawCounts],
    ["change:focus", drawFocus],
    ["change:brushed", drawBrushed],
    ["change:busy", drawBusy],
    ["change:error", () => drawLine(error, "error")],
    ["change:caution", () => drawLine(caution, "caution")],
    ["change:columns_note", () => drawLine(columnsNote, "columns_note")],
  ];
  for (const [event, listener] of modelListeners) model.on(event, listener);

  drawHeader();
  drawBody();
  drawCounts();
  drawView();
  drawPager();
  drawBusy();
  drawLine(error, "error");
  drawLine(caution, "caution");
  drawLine(columnsNote, "columns_note");

  return () => {
    for (const [event, listener] of modelListeners) model.off(event, listener);
    for (const [target, type, listener] of domListeners) target.removeEventListener(type, listener);
    rowElements.clear();
    drafts.clear();
    root.remove();
  };
}
