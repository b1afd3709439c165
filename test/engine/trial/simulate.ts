// Random trials for the cross-checks (fixed seeds): each design, balanced or with missing
// plots, with a mild row/column gradient so the spatial check has something to measure.
import { mulberry32, normalSampler } from '../../../src/engine/stats/random.js';
import type { PlotObservation, TrialDesign, TrialInput, TreatmentInfo } from '../../../src/engine/types.js';

export function shuffle<T>(a: T[], u: () => number): T[] {
  for (let i = a.length - 1; i > 0; i--) {
    const j = Math.floor(u() * (i + 1));
    [a[i], a[j]] = [a[j], a[i]];
  }
  return a;
}

export interface SimulatedTrial {
  readonly trial: TrialInput;
  readonly treatments: TreatmentInfo[];
}

/**
 * completely-randomised: t treatments x r reps on r rows x t cols, random allocation.
 * randomised-blocks: block = column, treatments randomised within each column (t rows).
 * latin-square: t x t cyclic square with shuffled rows, columns and treatment labels.
 * row-column: r rows x t cols, each row a complete replicate, columns random.
 */
export function simulateTrial(name: string, design: TrialDesign, t: number, r: number, missing: number, seed: number): SimulatedTrial {
  const u = mulberry32(seed);
  const z = normalSampler(u);
  const treatments: TreatmentInfo[] = Array.from({ length: t }, (_, i) => ({ code: `T${i + 1}`, levels: {} }));
  const effect = treatments.map(() => 2 * z());
  const cells: { row: number; col: number; trt: number; block: string | null }[] = [];
  if (design === 'completely-randomised') {
    const labels = shuffle(Array.from({ length: t * r }, (_, i) => i % t), u);
    for (let i = 0; i < r; i++) for (let j = 0; j < t; j++) cells.push({ row: i + 1, col: j + 1, trt: labels[i * t + j], block: null });
  } else if (design === 'randomised-blocks') {
    for (let b = 0; b < r; b++) {
      const order = shuffle(Array.from({ length: t }, (_, i) => i), u);
      for (let i = 0; i < t; i++) cells.push({ row: i + 1, col: b + 1, trt: order[i], block: `B${b + 1}` });
    }
  } else if (design === 'latin-square') {
    const rows = shuffle(Array.from({ length: t }, (_, i) => i), u);
    const cols = shuffle(Array.from({ length: t }, (_, i) => i), u);
    const lab = shuffle(Array.from({ length: t }, (_, i) => i), u);
    for (let i = 0; i < t; i++) for (let j = 0; j < t; j++) cells.push({ row: rows[i] + 1, col: cols[j] + 1, trt: lab[(i + j) % t], block: null });
  } else {
    for (let i = 0; i < r; i++) {
      const order = shuffle(Array.from({ length: t }, (_, k) => k), u);
      for (let j = 0; j < t; j++) cells.push({ row: i + 1, col: j + 1, trt: order[j], block: null });
    }
  }
  const rowEff = new Map<number, number>();
  const colEff = new Map<number, number>();
  const blockEff = new Map<string, number>();
  const plots: PlotObservation[] = cells.map((c, k) => {
    if (!rowEff.has(c.row)) rowEff.set(c.row, 0.8 * z());
    if (!colEff.has(c.col)) colEff.set(c.col, 0.8 * z());
    if (c.block && !blockEff.has(c.block)) blockEff.set(c.block, z());
    const y = 20 + effect[c.trt] + (rowEff.get(c.row) as number) + (colEff.get(c.col) as number) + (c.block ? (blockEff.get(c.block) as number) : 0) + 0.15 * c.col + z();
    return { plotId: k + 1, treatment: treatments[c.trt].code, block: c.block, row: c.row, col: c.col, value: y };
  });
  const drop = shuffle(plots.map((_, i) => i), u).slice(0, missing);
  for (const i of drop) plots[i] = { ...plots[i], value: null };
  return { trial: { trial: name, design, plots }, treatments };
}

/** One CSV of the analysed plots, for R. */
export function plotsCsv(trial: TrialInput): string {
  const lines = ['id,trt,block,row,col,y'];
  for (const p of trial.plots) if (p.value !== null && !p.excluded) lines.push(`${p.plotId},${p.treatment},${p.block ?? 'NA'},${p.row},${p.col},${p.value.toPrecision(17)}`);
  return lines.join('\n') + '\n';
}
