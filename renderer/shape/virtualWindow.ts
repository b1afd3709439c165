// Which rows of a long list to draw: only those in view plus a margin, for lists of fixed row height.

export interface RowWindow {
  readonly first: number;
  /** One past the last row drawn. */
  readonly end: number;
  readonly padTop: number;
  readonly padBottom: number;
}

export function visibleRows(total: number, rowHeight: number, scrollTop: number, viewportHeight: number, overscan = 8): RowWindow {
  if (total <= 0 || rowHeight <= 0) return { first: 0, end: 0, padTop: 0, padBottom: 0 };
  const firstVisible = Math.floor(Math.max(0, scrollTop) / rowHeight);
  const visibleCount = Math.ceil(Math.max(0, viewportHeight) / rowHeight) + 1;
  const first = Math.max(0, Math.min(total - 1, firstVisible - overscan));
  const end = Math.min(total, firstVisible + visibleCount + overscan);
  return { first, end: Math.max(first, end), padTop: first * rowHeight, padBottom: (total - Math.max(first, end)) * rowHeight };
}
