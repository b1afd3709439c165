// Tables stored column by column (one array per field) back into rows, for the screens.
export type ColumnsOf<R> = { readonly [K in keyof R]: readonly R[K][] };

export function rowsFromColumnsView<R extends object>(columns: ColumnsOf<R>): R[] {
  const fields = Object.keys(columns) as (keyof R)[];
  const n = fields.length === 0 ? 0 : (columns[fields[0]] as readonly unknown[]).length;
  const rows: R[] = new Array(n);
  for (let i = 0; i < n; i++) {
    const row = {} as R;
    for (const f of fields) row[f] = (columns[f] as readonly R[keyof R][])[i];
    rows[i] = row;
  }
  return rows;
}
