import { describe, expect, it } from "vitest";
import { CSS } from "../src/styles";

describe("style sheet", () => {
  it("gives every theme variable a fallback", () => {
    const uses = [...CSS.matchAll(/var\(\s*(--[\w-]+)\s*([,)])/g)];
    expect(uses.length).toBeGreaterThan(10);
    const bare = uses.filter(([, name, next]) => next === ")" && name.startsWith("--jp-"));
    expect(bare.map(([whole]) => whole)).toEqual([]);
  });

  it("uses the strayline state colours", () => {
    for (const colour of ["#C8571B", "#1F4E9C", "#1B8A7A", "#8A8F98"]) expect(CSS).toContain(colour);
  });

  it("tells states apart by border style as well as colour", () => {
    expect(CSS).toMatch(/\.sl-state-flagged > th\.sl-label \{ border-left: 4px solid /);
    expect(CSS).toMatch(/\.sl-state-marked > th\.sl-label \{ border-left: 4px double /);
    expect(CSS).toMatch(/\.sl-state-kept > th\.sl-label \{ border-left: 4px dashed /);
  });

  it("truncates long cells with an ellipsis", () => {
    const cellRule = CSS.match(/\.sl-grid th, \.sl-grid td \{([^}]*)\}/)?.[1] ?? "";
    expect(cellRule).toContain("text-overflow: ellipsis");
    expect(cellRule).toContain("overflow: hidden");
    expect(cellRule).toMatch(/max-width: \d+ch/);
  });
});
