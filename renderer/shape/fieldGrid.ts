// The field layout as a grid of cells: by recorded row and column, or (when positions are not
// recorded) one line per block with the plots in stored order. Each cell carries its colour
// and the text drawn in it, so the grid never relies on colour alone.
import { divergingColour, EXCLUDED_FILL, MISSING_FILL, sequentialColour, textColourOn } from './palette.js';
import { extent, symmetricExtent } from './scales.js';

export interface GridPlotInput {
  readonly id: number;
  readonly label: string;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  readonly value: number | null;
  readonly residual: number | null;
  readonly excluded: boolean;
}

export type GridColouring = 'value' | 'residual';

export interface GridCell<P extends GridPlotInput = GridPlotInput> {
  readonly plot: P;
  /** 0-based position on the drawn grid. */
  readonly gridRow: number;
  readonly gridCol: number;
  readonly fill: string;
  readonly textColour: string;
  readonly state: 'used' | 'excluded' | 'missing';
}

export interface GridLegendStop {
  readonly value: number;
  readonly colour: string;
}

export interface FieldGridLayout<P extends GridPlotInput = GridPlotInput> {
  readonly cells: GridCell<P>[];
  readonly rows: number;
  readonly cols: number;
  /** How the grid was laid out, said on screen. */
  readonly basis: 'row-column' | 'block-position';
  readonly rowLabels: string[];
  readonly colLabels: string[];
  readonly legend: GridLegendStop[];
}

function positions(plots: readonly GridPlotInput[]): { basis: FieldGridLayout['basis']; at: Map<number, [number, number]>; rowLabels: string[]; colLabels: string[] } {
  const at = new Map<number, [number, number]>();
  if (plots.length > 0 && plots.every((p) => p.row !== null && p.col !== null)) {
    const rows = [...new Set(plots.map((p) => p.row as number))].sort((a, b) => a - b);
    const cols = [...new Set(plots.map((p) => p.col as number))].sort((a, b) => a - b);
    const minR = rows[0];
    const minC = cols[0];
    const maxR = rows[rows.length - 1];
    const maxC = cols[cols.length - 1];
    for (const p of plots) at.set(p.id, [(p.row as number) - minR, (p.col as number) - minC]);
    return {
      basis: 'row-column',
      at,
      rowLabels: Array.from({ length: maxR - minR + 1 }, (_, i) => `Row ${minR + i}`),
      colLabels: Array.from({ length: maxC - minC + 1 }, (_, i) => String(minC + i)),
    };
  }
  const blocks = [...new Set(plots.map((p) => p.block ?? '–'))];
  const nextInBlock = new Map<string, number>();
  for (const p of plots) {
    const b = p.block ?? '–';
    const pos = nextInBlock.get(b) ?? 0;
    nextInBlock.set(b, pos + 1);
    at.set(p.id, [blocks.indexOf(b), pos]);
  }
  const width = Math.max(0, ...nextInBlock.values());
  return { basis: 'block-position', at, rowLabels: blocks.map((b) => `Block ${b}`), colLabels: Array.from({ length: width }, (_, i) => String(i + 1)) };
}

const LEGEND_STEPS = 5;

export function layoutFieldGrid<P extends GridPlotInput>(plots: readonly P[], colouring: GridColouring): FieldGridLayout<P> {
  const { basis, at, rowLabels, colLabels } = positions(plots);
  const used = plots.filter((p) => !p.excluded);
  const range = colouring === 'value' ? extent(used.map((p) => p.value)) : symmetricExtent(used.map((p) => p.residual));
  const min = range?.min ?? 0;
  const max = range?.max ?? 1;
  const colourOf = (v: number) => {
    const t = max > min ? (v - min) / (max - min) : 0.5;
    return colouring === 'value' ? sequentialColour(t) : divergingColour(t);
  };
  const cells = plots.map((plot) => {
    const [gridRow, gridCol] = at.get(plot.id) ?? [0, 0];
    const v = colouring === 'value' ? plot.value : plot.residual;
    const state: GridCell<P>['state'] = plot.excluded ? 'excluded' : plot.value === null ? 'missing' : 'used';
    const fill = state === 'excluded' ? EXCLUDED_FILL : v === null ? MISSING_FILL : colourOf(v);
    return { plot, gridRow, gridCol, fill, textColour: textColourOn(fill), state };
  });
  const legend = range
    ? Array.from({ length: LEGEND_STEPS }, (_, i) => {
        const value = min + ((max - min) * i) / (LEGEND_STEPS - 1);
        return { value, colour: colourOf(value) };
      })
    : [];
  return { cells, rows: rowLabels.length, cols: colLabels.length, basis, rowLabels, colLabels, legend };
}
