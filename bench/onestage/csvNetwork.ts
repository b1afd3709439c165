// A deliberately small reader for the bench's own CSV files (env,block,trt,y with a header), so
// the bench can time read + fit + print without depending on the intake layer.
import type { NetworkInput, PlotObservation, TrialInput } from '../../src/engine/types.js';

export function networkFromCsv(text: string): NetworkInput {
  const lines = text.split('\n');
  const header = lines[0].trim().split(',');
  const ie = header.indexOf('env');
  const ib = header.indexOf('block');
  const it = header.indexOf('trt');
  const iy = header.indexOf('y');
  if (ie < 0 || ib < 0 || it < 0 || iy < 0) throw new Error('bench CSV needs columns env, block, trt, y');
  const trials = new Map<string, PlotObservation[]>();
  const codes = new Set<string>();
  for (let n = 1; n < lines.length; n++) {
    const line = lines[n];
    if (line.length === 0) continue;
    const f = line.split(',');
    const y = f[iy] === '' || f[iy] === 'NA' ? null : Number(f[iy]);
    codes.add(f[it]);
    let plots = trials.get(f[ie]);
    if (!plots) trials.set(f[ie], (plots = []));
    plots.push({ treatment: f[it], block: f[ib], row: null, col: null, value: y });
  }
  const trialList: TrialInput[] = [...trials].map(([trial, plots]) => ({ trial, design: 'randomised-blocks', plots }));
  return { trait: 'y', factors: [], treatments: [...codes].sort().map((code) => ({ code, levels: {} })), trials: trialList };
}
