// Adjusted treatment means shaped for the interval chart and its table.

export interface MeanInput {
  readonly treatment: string;
  readonly estimable: boolean;
  readonly estimate: number | null;
  readonly lower: number | null;
  readonly upper: number | null;
  readonly se: number | null;
  readonly n: number;
}

export interface MeanRow {
  readonly treatment: string;
  readonly label: string;
  readonly estimate: number;
  readonly lower: number;
  readonly upper: number;
  readonly se: number | null;
  readonly n: number;
  /** [below, above] distances from the estimate to the interval ends, as the error bar wants them. */
  readonly error: [number, number];
  readonly isControl: boolean;
}

export function meanRows(means: readonly MeanInput[], labels: ReadonlyMap<string, string>, control: string | null): MeanRow[] {
  return means
    .filter((m) => m.estimable && m.estimate !== null && m.lower !== null && m.upper !== null)
    .map((m) => {
      const estimate = m.estimate as number;
      const lower = m.lower as number;
      const upper = m.upper as number;
      return {
        treatment: m.treatment,
        label: labels.get(m.treatment) ?? m.treatment,
        estimate,
        lower,
        upper,
        se: m.se,
        n: m.n,
        error: [estimate - lower, upper - estimate],
        isControl: m.treatment === control,
      };
    });
}

/** The treatments the trial could not estimate, named beside the chart. */
export function notEstimable(means: readonly MeanInput[]): string[] {
  return means.filter((m) => !m.estimable || m.estimate === null).map((m) => m.treatment);
}
