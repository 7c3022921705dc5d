/**
 * A stand-in for anywidget's model: holds traits, fires `change:<name>`
 * events on `set`, and records what the view sends.
 */
import type { Request, Row, TableModel, TableTraits } from "../src/types";

type Listener = () => void;

export class FakeModel implements TableModel {
  traits: TableTraits;
  sent: Request[] = [];
  /** Calls to `set`/`save_changes`; the view must never make any. */
  writes: string[] = [];
  private listeners = new Map<string, Set<Listener>>();

  constructor(traits: Partial<TableTraits> = {}) {
    this.traits = { ...defaults(), ...traits };
  }

  get<K extends keyof TableTraits>(key: K): TableTraits[K] {
    return this.traits[key];
  }

  set<K extends keyof TableTraits>(key: K, _value: TableTraits[K]): void {
    this.writes.push(`set:${String(key)}`);
  }

  save_changes(): void {
    this.writes.push("save_changes");
  }

  on(eventName: string, callback: Listener): void {
    let set = this.listeners.get(eventName);
    if (!set) this.listeners.set(eventName, (set = new Set()));
    set.add(callback);
  }

  off(eventName?: string | null, callback?: Listener | null): void {
    if (!eventName) {
      this.listeners.clear();
      return;
    }
    if (!callback) this.listeners.delete(eventName);
    else this.listeners.get(eventName)?.delete(callback);
  }

  send(content: Request): void {
    this.sent.push(content);
  }

  /** What Python does: change traits, then fire one change event per trait. */
  update(changes: Partial<TableTraits>): void {
    Object.assign(this.traits, changes);
    for (const key of Object.keys(changes)) {
      for (const listener of [...(this.listeners.get(`change:${key}`) ?? [])]) listener();
    }
  }

  listenerCount(): number {
    let n = 0;
    for (const set of this.listeners.values()) n += set.size;
    return n;
  }
}

export function defaults(): TableTraits {
  return {
    columns: [],
    rows: [],
    total: 0,
    page: 0,
    page_size: 50,
    sort_column: "",
    sort_ascending: true,
    view: "affected",
    counts: { rows: 0, flagged: 0, marked: 0, kept: 0, missing: 0, mask: 0 },
    focus: -1,
    brushed: [],
    busy: false,
    error: "",
    caution: "",
    columns_note: "",
  };
}

export function row(id: number, overrides: Partial<Row> = {}): Row {
  return {
    id,
    label: `r${id}`,
    state: "",
    score: "",
    reason: "",
    note: "",
    cells: [],
    ...overrides,
  };
}
