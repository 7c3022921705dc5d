import { describe, expect, it } from "vitest";
import { groupDigits, hasNextPage, pageBounds, rangeText } from "../src/format";

describe("groupDigits", () => {
  it.each([
    [0, "0"],
    [7, "7"],
    [999, "999"],
    [1000, "1,000"],
    [1234567, "1,234,567"],
    [-45000, "-45,000"],
    [12.9, "12"],
    [Number.NaN, "–"],
    [Number.POSITIVE_INFINITY, "–"],
  ])("%s -> %s", (n, text) => {
    expect(groupDigits(n)).toBe(text);
  });
});

describe("rangeText", () => {
  it.each([
    [0, 50, 0, "no rows"],
    [0, 50, 1, "row 1 of 1"],
    [0, 50, 7, "rows 1–7 of 7"],
    [1, 50, 1234, "rows 51–100 of 1,234"],
    [24, 50, 1234, "rows 1,201–1,234 of 1,234"],
    [2, 50, 101, "row 101 of 101"],
    [5, 50, 100, "no rows on this page (100 in all)"],
  ])("page %i of size %i, %i rows -> %s", (page, size, total, text) => {
    expect(rangeText(page, size, total)).toBe(text);
  });
});

describe("paging arithmetic", () => {
  it("bounds clamp to the total", () => {
    expect(pageBounds(2, 50, 120)).toEqual({ start: 100, stop: 120 });
    expect(pageBounds(-1, 50, 120)).toEqual({ start: 0, stop: 50 });
    expect(pageBounds(0, 0, 120)).toEqual({ start: 0, stop: 1 });
  });

  it("there is a next page while rows remain after this one", () => {
    expect(hasNextPage(0, 50, 51)).toBe(true);
    expect(hasNextPage(0, 50, 50)).toBe(false);
    expect(hasNextPage(1, 50, 101)).toBe(true);
    expect(hasNextPage(2, 50, 101)).toBe(false);
    expect(hasNextPage(0, 50, 0)).toBe(false);
  });
});
