/**
 * The shapes shared with the Python side (`strayline/view/table.py`).
 *
 * Python owns every trait; the front-end only reads them and sends
 * requests back with `model.send`.
 */

/** Row states as Python sends them; "" means the row has no state. */
export type RowState = "flagged" | "marked" | "kept" | "missing" | "";

/** The row states that carry a badge, in display order. */
export const STATES = ["flagged", "marked", "kept", "missing"] as const;

/** Which rows the table lists. */
export type View = "affected" | "all" | "flagged" | "marked" | "kept";

/** The views in the order the chooser offers them, with their labels. */
export const VIEWS: ReadonlyArray<readonly [View, string]> = [
  ["affected", "Flagged, marked or kept"],
  ["all", "All rows"],
  ["flagged", "Flagged only"],
  ["marked", "Marked only"],
  ["kept", "Kept only"],
];

/** Sort names for the leading columns; data columns sort by their header text. */
export const LABEL_COLUMN = "__label__";
export const STATE_COLUMN = "__state__";
export const SCORE_COLUMN = "__score__";

/** One row of the current page, every value already formatted by Python. */
export interface Row {
  id: number;
  label: string;
  state: RowState;
  score: string;
  reason: string;
  note: string;
  cells: string[];
}

export interface Counts {
  rows: number;
  flagged: number;
  marked: number;
  kept: number;
  missing: number;
  mask: number;
}

/** The synced traits of `RowTable`. */
export interface TableTraits {
  columns: string[];
  rows: Row[];
  total: number;
  page: number;
  page_size: number;
  sort_column: string;
  sort_ascending: boolean;
  view: View;
  counts: Partial<Counts>;
  focus: number;
  brushed: number[];
  busy: boolean;
  error: string;
  caution: string;
  columns_note: string;
}

export type RowAction = "mark" | "keep" | "clear" | "focus";

/** Requests the front-end sends to Python. */
export type Request =
  | { kind: "page"; page: number }
  | { kind: "sort"; column: string; ascending: boolean }
  | { kind: "view"; value: View }
  | { kind: "row"; action: RowAction; id: number }
  | { kind: "note"; id: number; text: string };

/**
 * The part of anywidget's model the table uses. anywidget's own model
 * satisfies it; tests pass a small fake.
 */
export interface TableModel {
  get<K extends keyof TableTraits>(key: K): TableTraits[K];
  on(eventName: string, callback: () => void): void;
  off(eventName?: string | null, callback?: (() => void) | null): void;
  send(content: Request): void;
}
