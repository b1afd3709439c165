// A deliberately small reader for the bench's own CSV files (env,block,trt,y with a header, no
// quoting), so the bench can time read + fit + print without depending on the intake layer.
import type { NetworkInput, PlotObservation, TrialInput } from '../../src/engine/types.js';

export function networkFromCsv(text: string): NetworkInput {
  const firstBreak = text.indexOf('\n');
  const header = text.slice(0, firstBreak).trim().split(',');
  const want = ['env', 'block', 'trt', 'y'].map((c) => header.indexOf(c));
  if (want.some((i) => i < 0) || header.length !== 4) throw new Error('bench CSV needs exactly the columns env, block, trt, y');
  const [ie, ib, it, iy] = want;
  const trials = new Map<string, PlotObservation[]>();
  const codes = new Set<string>();
  const intern = new Map<string, string>();
  const field = new Array<string>(4);
  let pos = firstBreak + 1;
  while (pos < text.length) {
    let end = text.indexOf('\n', pos);
    if (end < 0) end = text.length;
    if (end > pos) {
      let start = pos;
      for (let f = 0; f < 4; f++) {
        let stop = f < 3 ? text.indexOf(',', start) : end;
        if (stop < 0 || stop > end) stop = end;
        const raw = text.slice(start, stop);
        field[f] = f === iy ? raw : (intern.get(raw) ?? (intern.set(raw, raw), raw));
        start = stop + 1;
      }
      const yRaw = field[iy].trim();
      const y = yRaw === '' || yRaw === 'NA' ? null : Number(yRaw);
      codes.add(field[it]);
      let plots = trials.get(field[ie]);
      if (!plots) trials.set(field[ie], (plots = []));
      plots.push({ treatment: field[it], block: field[ib], row: null, col: null, value: y });
    }
    pos = end + 1;
  }
  const trialList: TrialInput[] = [...trials].map(([trial, plots]) => ({ trial, design: 'randomised-blocks', plots }));
  return { trait: 'y', factors: [], treatments: [...codes].sort().map((code) => ({ code, levels: {} })), trials: trialList };
}
