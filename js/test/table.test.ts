import { afterEach, beforeEach, describe, expect, it } from "vitest";
import widget from "../src/index";
import { mountTable } from "../src/table";
import type { TableTraits } from "../src/types";
import { FakeModel, row } from "./fake-model";

let el: HTMLElement;
let cleanups: Array<() => void>;

beforeEach(() => {
  el = document.createElement("div");
  document.body.append(el);
  cleanups = [];
});

afterEach(() => {
  for (const cleanup of cleanups) cleanup();
  el.remove();
  delete (window as unknown as Record<string, unknown>).__pwned;
});

function mount(traits: Partial<TableTraits> = {}): FakeModel {
  const model = new FakeModel(traits);
  cleanups.push(mountTable(model, el));
  return model;
}

const $ = <T extends Element = HTMLElement>(selector: string): T => {
  const found = el.querySelector<T>(selector);
  if (!found) throw new Error(`nothing matches ${selector}`);
  return found;
};
const $$ = <T extends Element = HTMLElement>(selector: string): T[] => [
  ...el.querySelectorAll<T>(selector),
];

function key(target: Element, name: string, type = "keydown"): KeyboardEvent {
  const event = new KeyboardEvent(type, { key: name, bubbles: true, cancelable: true });
  target.dispatchEvent(event);
  return event;
}

const threeRows = (): Partial<TableTraits> => ({
  columns: ["temp", "pressure"],
  rows: [
    row(4, { label: "a", state: "flagged", score: "3.2", reason: "above upper fence", cells: ["98.1", "1.2"] }),
    row(9, { label: "b", state: "marked", cells: ["12.0", "1.1"] }),
    row(17, { label: "c", state: "", cells: ["11.9", "1.0"], note: "checked" }),
  ],
  total: 3,
});

describe("structure", () => {
  it("builds the root, counters, view chooser and pager", () => {
    mount();
    const root = $(".sl-table");
    expect(root.getAttribute("data-strayline")).toBe("table");
    expect($$("[data-count]").map((node) => node.getAttribute("data-count"))).toEqual([
      "rows",
      "flagged",
      "marked",
      "kept",
      "missing",
      "mask",
    ]);
    const select = $<HTMLSelectElement>('select[data-role="view"]');
    expect([...select.options].map((option) => option.value)).toEqual([
      "affected",
      "all",
      "flagged",
      "marked",
      "kept",
    ]);
    expect($('[data-role="prev"]').textContent).toBe("Previous");
    expect($('[data-role="next"]').textContent).toBe("Next");
    expect($("style").textContent).toContain(".sl-table");
  });

  it("default export renders through anywidget's render() and cleans up", () => {
    const model = new FakeModel(threeRows());
    expect(typeof widget).toBe("object");
    const definition = widget as Exclude<typeof widget, () => unknown>;
    expect(typeof definition.initialize).toBe("function");
    const cleanup = definition.render!({ model, el } as never) as () => void;
    expect($$("tr.sl-row")).toHaveLength(3);
    cleanup();
    expect(el.childElementCount).toBe(0);
  });
});

describe("rows", () => {
  it("renders each row with its id, state, classes, badge and cells", () => {
    mount(threeRows());
    const rows = $$<HTMLTableRowElement>("tbody tr");
    expect(rows.map((tr) => tr.getAttribute("data-id"))).toEqual(["4", "9", "17"]);
    expect(rows.map((tr) => tr.getAttribute("data-state"))).toEqual(["flagged", "marked", ""]);
    expect(rows[0].classList.contains("sl-row")).toBe(true);
    expect(rows[0].classList.contains("sl-state-flagged")).toBe(true);
    expect(rows[1].classList.contains("sl-state-marked")).toBe(true);
    expect(rows[2].classList.contains("sl-state-none")).toBe(true);

    const first = rows[0];
    expect(first.querySelector("th.sl-label")?.textContent).toBe("a");
    expect(first.querySelector(".sl-badge")?.textContent).toBe("flagged");
    expect(first.querySelector(".sl-badge")?.classList.contains("sl-badge-flagged")).toBe(true);
    expect(rows[2].querySelector(".sl-badge")).toBeNull();
    expect(first.querySelector(".sl-num")?.textContent).toBe("3.2");
    expect(first.querySelector(".sl-reason")?.textContent).toBe("above upper fence");
    expect([...first.querySelectorAll(".sl-cell")].map((td) => td.textContent)).toEqual(["98.1", "1.2"]);
    expect(rows[2].querySelector<HTMLInputElement>('input[data-role="note"]')?.value).toBe("checked");
  });

  it("puts headers in order: label, state, actions, score, reason, data, note", () => {
    mount(threeRows());
    const heads = $$("thead th").map((th) => th.getAttribute("data-column") ?? th.textContent);
    expect(heads).toEqual(["__label__", "__state__", "Decide", "__score__", "Reason", "temp", "pressure", "Note"]);
    const cellsPerRow = $$("tbody tr").map((tr) => tr.children.length);
    expect(cellsPerRow).toEqual([8, 8, 8]);
  });

  it("pads short cell lists and ignores extra cells so the grid stays aligned", () => {
    mount({ columns: ["x", "y", "z"], rows: [row(1, { cells: ["1"] }), row(2, { cells: ["1", "2", "3", "4"] })] });
    const cells = $$("tbody tr").map((tr) => [...tr.querySelectorAll(".sl-cell")].map((td) => td.textContent));
    expect(cells).toEqual([
      ["1", "", ""],
      ["1", "2", "3"],
    ]);
  });

  it("treats an unknown state as no state", () => {
    mount({ rows: [row(1, { state: "evil onload" as never })] });
    const tr = $("tr.sl-row");
    expect(tr.getAttribute("data-state")).toBe("");
    expect(tr.className).toBe("sl-row sl-state-none");
  });

  it("shows a message row when the view is empty", () => {
    mount({ columns: ["x"] });
    expect($$("tr.sl-row")).toHaveLength(0);
    const empty = $("tbody tr.sl-empty td");
    expect(empty.textContent).toBe("No rows in this view.");
    expect(empty.getAttribute("colspan")).toBe("7");
  });

  it("redraws the body when rows change", () => {
    const model = mount(threeRows());
    model.update({ rows: [row(30, { state: "kept" })] });
    const rows = $$("tr.sl-row");
    expect(rows.map((tr) => tr.getAttribute("data-id"))).toEqual(["30"]);
    expect(rows[0].querySelector(".sl-badge")?.textContent).toBe("kept");
  });

  it("redraws header and body when columns change", () => {
    const model = mount(threeRows());
    model.update({ columns: ["only"], rows: [row(1, { cells: ["v"] })] });
    expect($$("thead th[data-column]").map((th) => th.getAttribute("data-column"))).toEqual([
      "__label__",
      "__state__",
      "__score__",
      "only",
    ]);
    expect($$(".sl-cell").map((td) => td.textContent)).toEqual(["v"]);
  });
});

describe("hostile text stays text", () => {
  const hostile = [
    "<img src=x onerror=window.__pwned=1>",
    "</script><script>window.__pwned=1</script>",
    '"><svg onload=window.__pwned=1>',
    "x".repeat(10_000),
    "درجة الحرارة مرتفعة",
    "טמפרטורה גבוהה",
  ];

  it.each(hostile)("%#: as label, score, reason, cell, note, column and messages", (text) => {
    mount({
      columns: [text],
      rows: [row(1, { label: text, score: text, reason: text, note: text, cells: [text], state: "flagged" })],
      total: 1,
      error: text,
      caution: text,
      columns_note: text,
    });
    const tr = $("tr.sl-row");
    expect(tr.querySelector("th.sl-label")?.textContent).toBe(text);
    expect(tr.querySelector(".sl-num")?.textContent).toBe(text);
    expect(tr.querySelector(".sl-reason")?.textContent).toBe(text);
    expect(tr.querySelector(".sl-cell")?.textContent).toBe(text);
    expect(tr.querySelector<HTMLInputElement>('input[data-role="note"]')?.value).toBe(text);
    expect($("thead th[data-column]:nth-child(6) .sl-head-text").textContent).toBe(text);
    expect($('thead th[data-column]:nth-child(6)').getAttribute("data-column")).toBe(text);
    expect($('[data-role="error"]').textContent).toBe(text);
    expect($('[data-role="caution"]').textContent).toBe(text);
    expect($('[data-role="columns-note"]').textContent).toBe(text);
    expect(tr.querySelector(".sl-cell")?.getAttribute("title")).toBe(text);
    expect(tr.querySelector('button[data-action="mark"]')?.getAttribute("aria-label")).toBe(`Mark row ${text}`);

    expect(el.querySelectorAll("img, script, svg, iframe, object")).toHaveLength(0);
    expect(document.querySelectorAll("img, script[src], svg")).toHaveLength(0);
    expect((window as unknown as Record<string, unknown>).__pwned).toBeUndefined();
  });

  it("marks text cells dir=auto so right-to-left text runs the right way", () => {
    mount({ columns: ["x"], rows: [row(1, { label: "שורה", reason: "سبب", cells: ["قيمة"] })] });
    for (const selector of ["th.sl-label", ".sl-reason", ".sl-cell", ".sl-num", 'input[data-role="note"]']) {
      expect($(`tr.sl-row ${selector}`).getAttribute("dir")).toBe("auto");
    }
    expect($("tr.sl-row .sl-cell").textContent).toBe("قيمة");
  });

  it("keeps the full text of a long cell in its title", () => {
    const long = "y".repeat(10_000);
    mount({ columns: ["x"], rows: [row(1, { cells: [long] })] });
    const cell = $(".sl-cell");
    expect(cell.getAttribute("title")).toHaveLength(10_000);
    expect(cell.children).toHaveLength(0);
  });
});

describe("paging", () => {
  const page = (n: number, total = 1234): Partial<TableTraits> => ({
    rows: [row(n * 50)],
    page: n,
    page_size: 50,
    total,
  });

  it("shows the range with grouped digits", () => {
    const model = mount(page(1));
    expect($('[data-role="range"]').textContent).toBe("rows 51–100 of 1,234");
    model.update({ page: 24 });
    expect($('[data-role="range"]').textContent).toBe("rows 1,201–1,234 of 1,234");
    model.update({ total: 0, page: 0 });
    expect($('[data-role="range"]').textContent).toBe("no rows");
  });

  it("disables Previous on the first page and Next on the last", () => {
    const model = mount(page(0));
    const prev = $<HTMLButtonElement>('[data-role="prev"]');
    const next = $<HTMLButtonElement>('[data-role="next"]');
    expect([prev.disabled, next.disabled]).toEqual([true, false]);
    model.update({ page: 10 });
    expect([prev.disabled, next.disabled]).toEqual([false, false]);
    model.update({ page: 24 });
    expect([prev.disabled, next.disabled]).toEqual([false, true]);
    model.update({ total: 50, page: 0 });
    expect([prev.disabled, next.disabled]).toEqual([true, true]);
  });

  it("sends page requests and leaves the page trait to Python", () => {
    const model = mount(page(3));
    $('[data-role="next"]').click();
    $('[data-role="prev"]').click();
    expect(model.sent).toEqual([
      { kind: "page", page: 4 },
      { kind: "page", page: 2 },
    ]);
    expect(model.get("page")).toBe(3);
    expect(model.writes).toEqual([]);
  });

  it("sends nothing from a disabled button", () => {
    const model = mount(page(24));
    $('[data-role="next"]').dispatchEvent(new MouseEvent("click", { bubbles: true }));
    model.update({ page: 0 });
    $('[data-role="prev"]').dispatchEvent(new MouseEvent("click", { bubbles: true }));
    expect(model.sent).toEqual([]);
  });
});

describe("sorting", () => {
  it("a click on a header asks for ascending order of that column", () => {
    const model = mount(threeRows());
    $('th[data-column="temp"]').click();
    $('th[data-column="__score__"]').click();
    expect(model.sent).toEqual([
      { kind: "sort", column: "temp", ascending: true },
      { kind: "sort", column: "__score__", ascending: true },
    ]);
  });

  it("a click on the sorted header asks for the other direction", () => {
    const model = mount({ ...threeRows(), sort_column: "temp", sort_ascending: true });
    $('th[data-column="temp"] .sl-head-text').click();
    model.update({ sort_ascending: false });
    $('th[data-column="temp"]').click();
    expect(model.sent).toEqual([
      { kind: "sort", column: "temp", ascending: false },
      { kind: "sort", column: "temp", ascending: true },
    ]);
    expect(model.writes).toEqual([]);
  });

  it("Enter and Space on a focused header sort, other keys do not", () => {
    const model = mount({ ...threeRows(), sort_column: "__label__", sort_ascending: true });
    const th = $('th[data-column="__label__"]');
    expect(th.getAttribute("tabindex")).toBe("0");
    const enter = key(th, "Enter");
    expect(enter.defaultPrevented).toBe(true);
    key($('th[data-column="pressure"]'), " ");
    key(th, "a");
    key(th, "Tab");
    expect(model.sent).toEqual([
      { kind: "sort", column: "__label__", ascending: false },
      { kind: "sort", column: "pressure", ascending: true },
    ]);
  });

  it("shows the arrow and aria-sort on the sorted header only", () => {
    const model = mount({ ...threeRows(), sort_column: "pressure", sort_ascending: true });
    const mark = (column: string) => $(`th[data-column="${column}"] .sl-sort-mark`).textContent;
    const aria = (column: string) => $(`th[data-column="${column}"]`).getAttribute("aria-sort");
    expect([mark("pressure"), aria("pressure")]).toEqual(["▲", "ascending"]);
    expect([mark("temp"), aria("temp")]).toEqual(["", "none"]);
    model.update({ sort_ascending: false });
    expect([mark("pressure"), aria("pressure")]).toEqual(["▼", "descending"]);
    model.update({ sort_column: "__state__" });
    expect([mark("pressure"), aria("pressure")]).toEqual(["", "none"]);
    expect([mark("__state__"), aria("__state__")]).toEqual(["▼", "descending"]);
    model.update({ sort_column: "" });
    expect($$('th[aria-sort]:not([aria-sort="none"])')).toHaveLength(0);
  });

  it("reason, decision and note headers are not sortable", () => {
    const model = mount(threeRows());
    for (const th of $$("thead th:not([data-column])")) th.click();
    expect(model.sent).toEqual([]);
  });
});

describe("row actions", () => {
  it("Mark, Keep and Clear send the row action with the row id", () => {
    const model = mount(threeRows());
    $('tr[data-id="9"] button[data-action="mark"]').click();
    $('tr[data-id="4"] button[data-action="keep"]').click();
    $('tr[data-id="17"] button[data-action="clear"]').click();
    expect(model.sent).toEqual([
      { kind: "row", action: "mark", id: 9 },
      { kind: "row", action: "keep", id: 4 },
      { kind: "row", action: "clear", id: 17 },
    ]);
    expect(model.writes).toEqual([]);
  });

  it("buttons are real, reachable buttons named after the row", () => {
    mount(threeRows());
    const buttons = $$<HTMLButtonElement>('tr[data-id="4"] button[data-action]');
    expect(buttons.map((b) => b.textContent)).toEqual(["Mark", "Keep", "Clear"]);
    expect(buttons.map((b) => b.getAttribute("aria-label"))).toEqual(["Mark row a", "Keep row a", "Clear row a"]);
    for (const button of buttons) {
      expect(button.type).toBe("button");
      expect(button.tabIndex).toBe(0);
      expect(button.disabled).toBe(false);
    }
  });

  it("Enter or Space on a row button sends the action exactly once", () => {
    const model = mount(threeRows());
    const keep = $('tr[data-id="9"] button[data-action="keep"]');
    keep.focus();
    expect(document.activeElement).toBe(keep);
    const down = key(keep, "Enter");
    expect(down.defaultPrevented).toBe(true);
    const mark = $('tr[data-id="17"] button[data-action="mark"]');
    key(mark, " ");
    expect(key(mark, " ", "keyup").defaultPrevented).toBe(true);
    key(mark, "x");
    expect(model.sent).toEqual([
      { kind: "row", action: "keep", id: 9 },
      { kind: "row", action: "mark", id: 17 },
    ]);
  });

  it("a held key does not repeat the action", () => {
    const model = mount(threeRows());
    const mark = $('tr[data-id="9"] button[data-action="mark"]');
    key(mark, "Enter");
    mark.dispatchEvent(new KeyboardEvent("keydown", { key: "Enter", repeat: true, bubbles: true, cancelable: true }));
    expect(model.sent).toHaveLength(1);
  });

  it("a click elsewhere on a row asks to focus it; clicks on controls do not", () => {
    const model = mount(threeRows());
    $('tr[data-id="9"] .sl-cell').click();
    $('tr[data-id="4"] th.sl-label').click();
    $('tr[data-id="17"] input[data-role="note"]').click();
    expect(model.sent).toEqual([
      { kind: "row", action: "focus", id: 9 },
      { kind: "row", action: "focus", id: 4 },
    ]);
  });

  it("keyboard focus returns to the same control after the rows are redrawn", () => {
    const model = mount(threeRows());
    $('tr[data-id="9"] button[data-action="keep"]').focus();
    model.update({ rows: [row(4), row(9, { state: "kept" }), row(17)] });
    const active = document.activeElement as HTMLElement;
    expect(active.getAttribute("data-action")).toBe("keep");
    expect(active.closest("tr")?.getAttribute("data-id")).toBe("9");
    expect(active.closest("tr")?.getAttribute("data-state")).toBe("kept");
  });

  it("if the row left the page, focus stays at the same place in the table", () => {
    const model = mount(threeRows());
    $('tr[data-id="9"] button[data-action="keep"]').focus();
    model.update({ rows: [row(4), row(17)] });
    const active = document.activeElement as HTMLElement;
    expect(active.getAttribute("data-action")).toBe("keep");
    expect(active.closest("tr")?.getAttribute("data-id")).toBe("17");
  });
});

describe("notes", () => {
  it("sends the note on change and on Enter, once per new text", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="9"] input[data-role="note"]');
    input.value = "sensor swapped";
    input.dispatchEvent(new Event("input", { bubbles: true }));
    const enter = key(input, "Enter");
    expect(enter.defaultPrevented).toBe(true);
    input.dispatchEvent(new Event("change", { bubbles: true }));
    input.value = "sensor swapped at 10:00";
    input.dispatchEvent(new Event("change", { bubbles: true }));
    expect(model.sent).toEqual([
      { kind: "note", id: 9, text: "sensor swapped" },
      { kind: "note", id: 9, text: "sensor swapped at 10:00" },
    ]);
  });

  it("a change back to the saved text sends nothing", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="17"] input[data-role="note"]');
    input.value = "checked";
    input.dispatchEvent(new Event("change", { bubbles: true }));
    expect(model.sent).toEqual([]);
  });

  it("text being typed survives a redraw of the rows", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="4"] input[data-role="note"]');
    input.focus();
    input.value = "half a thou";
    input.dispatchEvent(new Event("input", { bubbles: true }));
    model.update({ brushed: [4], rows: [...model.get("rows")] });
    const again = $<HTMLInputElement>('tr[data-id="4"] input[data-role="note"]');
    expect(again).not.toBe(input);
    expect(again.value).toBe("half a thou");
    expect(document.activeElement).toBe(again);
    expect(model.sent).toEqual([]);
    key(again, "Enter");
    expect(model.sent).toEqual([{ kind: "note", id: 4, text: "half a thou" }]);
  });

  it("a note carried over a redraw is sent when the input loses focus", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="4"] input[data-role="note"]');
    input.focus();
    input.value = "drift";
    input.dispatchEvent(new Event("input", { bubbles: true }));
    model.update({ rows: [...model.get("rows")] });
    const again = $<HTMLInputElement>('tr[data-id="4"] input[data-role="note"]');
    // The browser fires no "change" here: the user has not edited the new input.
    again.dispatchEvent(new FocusEvent("focusout", { bubbles: true }));
    expect(model.sent).toEqual([{ kind: "note", id: 4, text: "drift" }]);
    again.dispatchEvent(new Event("change", { bubbles: true }));
    expect(model.sent).toHaveLength(1);
  });

  it("leaving a note unchanged sends nothing", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="17"] input[data-role="note"]');
    input.focus();
    input.blur();
    input.dispatchEvent(new FocusEvent("focusout", { bubbles: true }));
    expect(model.sent).toEqual([]);
  });

  it("text typed into a row that leaves the page is sent, not lost", () => {
    const model = mount(threeRows());
    const input = $<HTMLInputElement>('tr[data-id="4"] input[data-role="note"]');
    input.value = "look again";
    input.dispatchEvent(new Event("input", { bubbles: true }));
    model.update({ rows: [row(9)] });
    expect(model.sent).toEqual([{ kind: "note", id: 4, text: "look again" }]);
  });
});

describe("focus and brush highlights", () => {
  it("the focused class follows the focus trait", () => {
    const model = mount({ ...threeRows(), focus: 9 });
    const focused = () => $$(".sl-focused").map((tr) => tr.getAttribute("data-id"));
    expect(focused()).toEqual(["9"]);
    expect($('tr[data-id="9"]').getAttribute("aria-current")).toBe("true");
    model.update({ focus: 17 });
    expect(focused()).toEqual(["17"]);
    expect($('tr[data-id="9"]').hasAttribute("aria-current")).toBe(false);
    model.update({ focus: 12345 });
    expect(focused()).toEqual([]);
    model.update({ focus: 4 });
    model.update({ rows: [row(4), row(5)] });
    expect(focused()).toEqual(["4"]);
    model.update({ focus: -1 });
    expect(focused()).toEqual([]);
  });

  it("the brushed class follows the brushed trait and is separate from state", () => {
    const model = mount({ ...threeRows(), brushed: [4, 17, 999] });
    const brushed = () => $$(".sl-brushed").map((tr) => tr.getAttribute("data-id"));
    expect(brushed()).toEqual(["4", "17"]);
    expect($('tr[data-id="4"]').classList.contains("sl-state-flagged")).toBe(true);
    model.update({ brushed: [9] });
    expect(brushed()).toEqual(["9"]);
    model.update({ brushed: [] });
    expect(brushed()).toEqual([]);
    model.update({ brushed: [17] });
    model.update({ rows: [row(17), row(18)] });
    expect(brushed()).toEqual(["17"]);
  });
});

describe("header bar and messages", () => {
  it("counters show the grouped numbers and follow the counts trait", () => {
    const model = mount({ counts: { rows: 10000, flagged: 12, marked: 3, kept: 1, missing: 40, mask: 14 } });
    const number = (name: string) => $(`[data-count="${name}"] .sl-count-num`).textContent;
    expect(["rows", "flagged", "marked", "kept", "missing", "mask"].map(number)).toEqual([
      "10,000",
      "12",
      "3",
      "1",
      "40",
      "14",
    ]);
    expect($('[data-count="mask"]').textContent).toBe("14 in mask");
    model.update({ counts: { rows: 10000, flagged: 13, marked: 3, kept: 1, missing: 40, mask: 15 } });
    expect(number("flagged")).toBe("13");
    expect(number("mask")).toBe("15");
  });

  it("busy shows a live Working… indicator only while busy", () => {
    const model = mount();
    const busy = $('[data-role="busy"]');
    expect(busy.getAttribute("aria-live")).toBe("polite");
    expect(busy.hidden).toBe(true);
    model.update({ busy: true });
    expect(busy.hidden).toBe(false);
    expect(busy.textContent).toBe("Working…");
    expect($(".sl-table").getAttribute("aria-busy")).toBe("true");
    model.update({ busy: false });
    expect(busy.hidden).toBe(true);
    expect(busy.textContent).toBe("");
  });

  it("error, caution and columns note show only when not empty", () => {
    const model = mount({ caution: "A flag is a prompt to look." });
    const error = $('[data-role="error"]');
    const caution = $('[data-role="caution"]');
    const note = $('[data-role="columns-note"]');
    expect(error.getAttribute("role")).toBe("alert");
    expect([error.hidden, caution.hidden, note.hidden]).toEqual([true, false, true]);
    expect(caution.textContent).toBe("A flag is a prompt to look.");
    model.update({ error: "Column 'x' is not numeric", columns_note: "12 of 10,000 columns shown", caution: "" });
    expect([error.hidden, caution.hidden, note.hidden]).toEqual([false, true, false]);
    expect(error.textContent).toBe("Column 'x' is not numeric");
    expect(note.textContent).toBe("12 of 10,000 columns shown");
    model.update({ error: "" });
    expect(error.hidden).toBe(true);
  });

  it("the view chooser shows the view trait and sends view requests", () => {
    const model = mount({ view: "all" });
    const select = $<HTMLSelectElement>('select[data-role="view"]');
    expect(select.value).toBe("all");
    select.value = "kept";
    select.dispatchEvent(new Event("change", { bubbles: true }));
    expect(model.sent).toEqual([{ kind: "view", value: "kept" }]);
    expect(model.get("view")).toBe("all");
    model.update({ view: "flagged" });
    expect(select.value).toBe("flagged");
    expect(model.writes).toEqual([]);
  });
});

describe("cleanup", () => {
  it("removes every model listener and the table, and later changes draw nothing", () => {
    const model = new FakeModel(threeRows());
    const cleanup = mountTable(model, el);
    expect(model.listenerCount()).toBeGreaterThan(0);
    const tbody = $("tbody");
    const busy = $('[data-role="busy"]');
    const before = tbody.innerHTML;

    cleanup();
    expect(model.listenerCount()).toBe(0);
    expect(el.childElementCount).toBe(0);

    model.update({ rows: [row(99, { state: "kept" })], busy: true, focus: 4 });
    expect(tbody.innerHTML).toBe(before);
    expect(busy.hidden).toBe(true);
    tbody.querySelector<HTMLElement>('button[data-action="mark"]')?.click();
    expect(model.sent).toEqual([]);
  });

  it("two views of one model are independent", () => {
    const model = new FakeModel(threeRows());
    const other = document.createElement("div");
    document.body.append(other);
    const first = mountTable(model, el);
    const second = mountTable(model, other);
    first();
    model.update({ rows: [row(1)] });
    expect(other.querySelectorAll("tr.sl-row")).toHaveLength(1);
    second();
    other.remove();
    expect(model.listenerCount()).toBe(0);
  });
});
