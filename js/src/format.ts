/** Small text helpers for the counters and the pager. */

/** Whole number with comma thousands separators, e.g. 1234 -> "1,234". */
export function groupDigits(n: number): string {
  if (!Number.isFinite(n)) return "–";
  const whole = Math.trunc(n);
  const digits = String(Math.abs(whole));
  const groups: string[] = [];
  for (let end = digits.length; end > 0; end -= 3) {
    groups.unshift(digits.slice(Math.max(0, end - 3), end));
  }
  return (whole < 0 ? "-" : "") + groups.join(",");
}

/** First and one-past-last row numbers (0-based) that a page covers. */
export function pageBounds(
  page: number,
  pageSize: number,
  total: number,
): { start: number; stop: number } {
  const size = Math.max(1, Math.trunc(pageSize) || 1);
  const start = Math.max(0, Math.trunc(page) || 0) * size;
  const stop = Math.min(Math.max(0, total), start + size);
  return { start, stop };
}

/** The pager text, e.g. "rows 51–100 of 1,234". */
export function rangeText(page: number, pageSize: number, total: number): string {
  if (!(total > 0)) return "no rows";
  const { start, stop } = pageBounds(page, pageSize, total);
  if (start >= total) return `no rows on this page (${groupDigits(total)} in all)`;
  if (stop - start === 1) return `row ${groupDigits(start + 1)} of ${groupDigits(total)}`;
  return `rows ${groupDigits(start + 1)}–${groupDigits(stop)} of ${groupDigits(total)}`;
}

/** Whether there is a page after this one. */
export function hasNextPage(page: number, pageSize: number, total: number): boolean {
  const { start } = pageBounds(page, pageSize, total);
  const size = Math.max(1, Math.trunc(pageSize) || 1);
  return start + size < total;
}
