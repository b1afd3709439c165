// How a plot is named to the user: by the field's own label when the file had a plot column,
// else by its file row; never by an internal id the user has never seen.
export interface NamedPlot {
  readonly plotId?: string | number | null;
  readonly label?: string | null;
  readonly sourceRow?: number | null;
}

export function plotName(p: NamedPlot): string {
  if (p.label !== undefined && p.label !== null && p.label !== '') return `plot ${p.label}`;
  if (p.sourceRow !== undefined && p.sourceRow !== null) return `the plot on file row ${p.sourceRow}`;
  return p.plotId === undefined || p.plotId === null ? 'a plot' : `plot ${String(p.plotId)}`;
}
