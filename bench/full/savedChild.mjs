// Child process of bench:full: opens a saved analysis through the api handler map (the built
// dist/, as the desktop app's worker loads it) and times the summary, a page of trials and one
// trial's detail (first call, then the median over 21 other trials: one call on a shared machine
// is mostly noise). Prints "BENCH {json}" to stderr.
import { api } from '../../dist/api/handlers.js';

const [workspace, analysis, trial] = process.argv.slice(2);
const id = Number(analysis);
const time = async (f) => {
  const t0 = performance.now();
  const r = await f();
  if (!r.ok) throw new Error(r.error.message);
  return { ms: performance.now() - t0, data: r.data };
};
const list = await time(() => api['analysis.list']({ workspace }));
const first = await time(() => api['analysis.open']({ workspace, analysis: id }));
const open = await time(() => api['analysis.open']({ workspace, analysis: id }));
const tables = await time(() => api['analysis.open']({ workspace, analysis: id, tables: true }));
const page = await time(() => api['analysis.open']({ workspace, analysis: id, trials: { offset: 0, limit: 100 } }));
const detail = await time(() => api['analysis.trial']({ workspace, analysis: id, trial }));
const detail2 = await time(() => api['analysis.trial']({ workspace, analysis: id, trial }));
const others = await time(() => api['analysis.open']({ workspace, analysis: id, trials: { offset: Math.max(0, open.data.results.twoStage.trialCount - 30), limit: 21 } }));
const detailTimes = [];
for (const t of others.data.trials) detailTimes.push((await time(() => api['analysis.trial']({ workspace, analysis: id, trial: t.trial }))).ms);
detailTimes.sort((a, b) => a - b);
process.stderr.write(
  `BENCH ${JSON.stringify({
    listMs: list.ms,
    openFirstMs: first.ms,
    openMs: open.ms,
    pageMs: page.ms,
    tablesMs: tables.ms,
    detailMs: detail.ms,
    detailAgainMs: detail2.ms,
    detailMedianMs: detailTimes[Math.floor(detailTimes.length / 2)],
    detailTrials: detailTimes.length,
    detailPlots: detail.data.detail.diagnostics.plots.length,
    trialCount: open.data.results.twoStage.trialCount,
  })}\n`,
);
