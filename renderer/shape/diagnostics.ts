// Rows for the residual charts of one trial, from its plots (excluded plots and plots without a
// residual are left out: they were not in the fit).

export interface DiagnosticPlotInput {
  readonly id: number;
  readonly label: string;
  readonly treatment: string;
  readonly row: number | null;
  readonly col: number | null;
  readonly excluded: boolean;
  readonly fitted: number | null;
  readonly residual: number | null;
  readonly studentised: number | null;
  readonly cooks: number | null;
  readonly normalScore: number | null;
}

export interface ResidualPoint {
  readonly plot: number;
  readonly label: string;
  readonly treatment: string;
  readonly x: number;
  readonly y: number;
}

export interface CooksBar {
  readonly plot: number;
  readonly label: string;
  readonly treatment: string;
  readonly cooks: number;
  readonly above: boolean;
}

export interface PositionMean {
  readonly position: number;
  readonly mean: number;
  readonly n: number;
}

type Fitted = DiagnosticPlotInput & { fitted: number; residual: number };

function fittedPlots(plots: readonly DiagnosticPlotInput[]): Fitted[] {
  return plots.filter((p): p is Fitted => !p.excluded && p.fitted !== null && p.residual !== null);
}

function point(p: DiagnosticPlotInput, x: number, y: number): ResidualPoint {
  return { plot: p.id, label: p.label, treatment: p.treatment, x, y };
}

/** Studentised residual against fitted value (the raw residual where no studentised one exists). */
export function residualsAgainstFitted(plots: readonly DiagnosticPlotInput[]): ResidualPoint[] {
  return fittedPlots(plots).map((p) => point(p, p.fitted, p.studentised ?? p.residual));
}

/** Normal QQ: normal score (x) against the studentised residual (y), sorted by x. */
export function normalQuantiles(plots: readonly DiagnosticPlotInput[]): ResidualPoint[] {
  return fittedPlots(plots)
    .filter((p) => p.normalScore !== null && p.studentised !== null)
    .map((p) => point(p, p.normalScore as number, p.studentised as number))
    .sort((a, b) => a.x - b.x);
}

/** The reference line of the QQ plot through the end points of the x range (slope 1, through 0). */
export function qqReferenceLine(points: readonly ResidualPoint[]): [{ x: number; y: number }, { x: number; y: number }] | null {
  if (points.length < 2) return null;
  const lo = points[0].x;
  const hi = points[points.length - 1].x;
  return [
    { x: lo, y: lo },
    { x: hi, y: hi },
  ];
}

export function cooksBars(plots: readonly DiagnosticPlotInput[], threshold: number | null): CooksBar[] {
  return fittedPlots(plots)
    .filter((p) => p.cooks !== null)
    .map((p) => ({ plot: p.id, label: p.label, treatment: p.treatment, cooks: p.cooks as number, above: threshold !== null && (p.cooks as number) > threshold }));
}

/** Residuals along field rows ('row') or columns ('col'); empty when positions are not recorded. */
export function residualsAlong(plots: readonly DiagnosticPlotInput[], direction: 'row' | 'col'): ResidualPoint[] {
  return fittedPlots(plots)
    .filter((p) => p[direction] !== null)
    .map((p) => point(p, p[direction] as number, p.residual));
}

/** Mean residual at each position, the trend line drawn over the points. */
export function meansByPosition(points: readonly ResidualPoint[]): PositionMean[] {
  const sums = new Map<number, { s: number; n: number }>();
  for (const p of points) {
    const e = sums.get(p.x) ?? { s: 0, n: 0 };
    e.s += p.y;
    e.n += 1;
    sums.set(p.x, e);
  }
  return [...sums.entries()].sort((a, b) => a[0] - b[0]).map(([position, e]) => ({ position, mean: e.s / e.n, n: e.n }));
}
