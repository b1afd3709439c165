// bench:full — the whole analysis a user runs, at network scale, beside lme4 in the same run.
//   npm run bench:full [-- --sizes 1000,4000] [--repeats 1] [--bootstrap 200] [--skip-r] [--saved-only] [--baseline DIR]
// --baseline DIR: also run the same commands with another build of the project (its
// dist/cli/bundle.cjs, e.g. an earlier commit exported and built in DIR) and print its figures
// beside these, so before and after are measured in the same minutes on the same machine.
// On generated networks of the DESIGN §5 example (7 treatments x 4 blocks, sites over years,
// the three contrasts), each through the installed command in a fresh process:
//   1. the full spec: trial stage, two-stage REML + HKSJ with leave-one-out, influence and
//      cumulative pools, the one-stage model with Satterthwaite df and likelihood-ratio tests;
//   2. the same with the rate response and a bootstrap of the optimum;
//   3. the one-stage model alone (twoStage: null, no likelihood-ratio refits);
// beside lme4's lmer fitting the one-stage model on the same file (its own read+fit time and
// its whole Rscript process). Times are wall clock (with the CPU time beside them), peak memory
// is the process's maximum resident set. Then, at the largest size: the network imported into a
// workspace, analysed and saved, and the saved analysis opened through the api (summary, a page
// of trials, one trial's per-plot detail), with the stored size of that analysis.
// The machine may be shared: every figure comes from the same run as its reference, and ratios
// are what to read.
import { spawnSync } from 'node:child_process';
import { mkdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import Database from 'better-sqlite3';
import { EXAMPLE_MAPPING, exampleNetworkCsv, exampleSpec } from './exampleNetwork.js';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..', '..');
const args = process.argv.slice(2);
const arg = (name: string): string | undefined => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const sizes = (arg('--sizes') ?? '1000,4000').split(',').map(Number);
const repeats = Number(arg('--repeats') ?? 1);
const bootstrap = Number(arg('--bootstrap') ?? 200);
const skipR = args.includes('--skip-r');
/** Only the saved-analysis part, on the largest network. */
const savedOnly = args.includes('--saved-only');
const baseline = arg('--baseline');
const dir = join(tmpdir(), 'manyfield-bench-full');
mkdirSync(dir, { recursive: true });

interface Run {
  /** Whole process, wall clock. */
  readonly wall: number;
  /** Inside the command (after loading the bundle) or, for R, read + fit. */
  readonly inner: number;
  readonly cpu: number;
  readonly peakMb: number;
}

const fmt = (ms: number): string => (ms >= 10000 ? `${(ms / 1000).toFixed(1)} s` : ms >= 1000 ? `${(ms / 1000).toFixed(2)} s` : `${ms.toFixed(0)} ms`);
const mb = (bytes: number): string => `${(bytes / 1e6).toFixed(1)} MB`;
const verdict = (ok: boolean): string => (ok ? 'met' : 'NOT met');

function fastest<R extends Run>(f: () => R): R {
  const runs = Array.from({ length: repeats }, f);
  return runs.reduce((a, b) => (b.wall < a.wall ? b : a));
}

/** The installed command in a fresh process (with `bundle`, another build's command). */
function command(argv: string[], bundle?: string): Run {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [join(here, 'cliChild.cjs'), ...argv], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 30, env: bundle ? { ...process.env, MANYFIELD_BENCH_BUNDLE: bundle } : process.env });
  const wall = performance.now() - t0;
  const line = r.stderr.split('\n').find((l) => l.startsWith('BENCH '));
  if (r.status !== 0 || !line) throw new Error(`manyfield ${argv.join(' ')} failed (${r.status}):\n${r.stderr}`);
  const b = JSON.parse(line.slice(6));
  return { wall, inner: b.totalMs, cpu: b.cpuMs, peakMb: b.maxRssMb };
}

/** lme4's lmer on the same file: read.csv + fit timed inside R, the whole Rscript process outside. */
function lme4(file: string): Run & { logLik: number } {
  const script = join(dir, 'lmer.R');
  writeFileSync(
    script,
    `suppressMessages(library(lme4))
t0 <- proc.time()
d <- read.csv('${file}', stringsAsFactors = TRUE)
f <- lmer(y ~ trt + (1|env) + (1|env:block) + (1|env:trt), data = d, REML = TRUE)
t1 <- proc.time() - t0
cat(sprintf('inner=%.6f\\ncpu=%.6f\\nloglik=%.10f\\n', 1000 * t1[['elapsed']], 1000 * (t1[['user.self']] + t1[['sys.self']]), as.numeric(logLik(f))))
`,
  );
  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-f', 'MAXRSS %M', 'Rscript', '--vanilla', script], { cwd: root, encoding: 'utf8' });
  const wall = performance.now() - t0;
  if (r.status !== 0) throw new Error(`Rscript failed:\n${r.stderr}`);
  const value = (name: string): number => Number(new RegExp(`^${name}=(.*)$`, 'm').exec(r.stdout)?.[1]);
  const rss = Number(/MAXRSS (\d+)/.exec(r.stderr)?.[1] ?? NaN) / 1024;
  return { wall, inner: value('inner'), cpu: value('cpu'), peakMb: rss, logLik: value('loglik') };
}

function specFile(name: string, spec: object): string {
  const file = join(dir, `spec-${name}.json`);
  writeFileSync(file, JSON.stringify(spec));
  return file;
}

console.log(`bench:full — ${new Date().toISOString()} — node ${process.version}; fastest of ${repeats} run(s) per line`);
console.log('network: DESIGN §5 example (control + 40/80/160 at two timings, 4 blocks), trials = site-years; spec: its three contrasts');
console.log('reference: lme4 lmer(y ~ trt + (1|env) + (1|env:block) + (1|env:trt), REML) on the same file, in this same run\n');

const specs = {
  full: specFile('full', exampleSpec({ twoStage: true, oneStage: true, lrt: true })),
  rate: specFile('rate', exampleSpec({ twoStage: true, oneStage: true, lrt: true, rateBootstrap: bootstrap })),
  one: specFile('one', exampleSpec({ twoStage: false, oneStage: true, lrt: false })),
};
let largest = join(dir, `network-${Math.max(...sizes)}.csv`);
if (savedOnly) writeFileSync(largest, exampleNetworkCsv(Math.max(...sizes), 17 + Math.max(...sizes)));
for (const n of savedOnly ? [] : sizes) {
  const file = join(dir, `network-${n}.csv`);
  writeFileSync(file, exampleNetworkCsv(n, 17 + n));
  largest = file;
  const out = join(dir, `out-${n}.json`);
  const r = skipR ? null : fastest(() => lme4(file));
  console.log(`${n} trials (${n * 28} plots)`);
  if (r) console.log(`  lme4 lmer alone                 read+fit ${fmt(r.inner).padStart(8)} (cpu ${fmt(r.cpu)}), whole Rscript ${fmt(r.wall)}, peak ${r.peakMb.toFixed(0)} MB, logLik ${r.logLik.toFixed(4)}`);
  const full = fastest(() => command(['analyze', '--data', file, '--spec', specs.full, '--json', '--out', out]));
  const size = statSync(out).size;
  console.log(`  full spec (analyze --json)      command  ${fmt(full.inner).padStart(8)} (cpu ${fmt(full.cpu)}), whole process ${fmt(full.wall)}, peak ${full.peakMb.toFixed(0)} MB, JSON ${mb(size)}`);
  if (r) console.log(`    lme4 fit / whole command: ${(r.inner / full.inner).toFixed(1)}x (cpu ${(r.cpu / full.cpu).toFixed(1)}x)`);
  const plots = fastest(() => command(['analyze', '--data', file, '--spec', specs.full, '--json', '--detail', 'plots', '--out', out]));
  console.log(`  full spec, --detail plots       command  ${fmt(plots.inner).padStart(8)} (cpu ${fmt(plots.cpu)}), peak ${plots.peakMb.toFixed(0)} MB, JSON ${mb(statSync(out).size)}`);
  const rate = fastest(() => command(['analyze', '--data', file, '--spec', specs.rate, '--json', '--out', out]));
  console.log(`  + rate response, ${bootstrap}-draw bootstrap command ${fmt(rate.inner).padStart(8)} (cpu ${fmt(rate.cpu)}), peak ${rate.peakMb.toFixed(0)} MB, JSON ${mb(statSync(out).size)}`);
  if (baseline) {
    const bundle = join(baseline, 'dist', 'cli', 'bundle.cjs');
    const before = (spec: string) => {
      const run = fastest(() => command(['analyze', '--data', file, '--spec', spec, '--json', '--out', out], bundle));
      return `command ${fmt(run.inner)} (cpu ${fmt(run.cpu)}), peak ${run.peakMb.toFixed(0)} MB, JSON ${mb(statSync(out).size)}`;
    };
    console.log(`  baseline (${baseline}) full spec:      ${before(specs.full)}`);
    console.log(`  baseline + rate response + bootstrap:  ${before(specs.rate)}`);
  }
  const one = fastest(() => command(['analyze', '--data', file, '--spec', specs.one, '--json', '--out', out]));
  console.log(`  one-stage alone (no LRT)        command  ${fmt(one.inner).padStart(8)} (cpu ${fmt(one.cpu)}), whole process ${fmt(one.wall)}, peak ${one.peakMb.toFixed(0)} MB`);
  if (r) console.log(`    whole Rscript / whole process: ${(r.wall / one.wall).toFixed(1)}x; lme4 read+fit / command: ${(r.inner / one.inner).toFixed(1)}x`);
  if (n === Math.max(...sizes)) {
    console.log(`  targets at ${n} trials:`);
    console.log(`    whole command <= 1.0 s: ${fmt(full.inner)} — ${verdict(full.inner <= 1000)}${r ? `; >= 10x lme4's fit: ${(r.inner / full.inner).toFixed(1)}x — ${verdict(r.inner / full.inner >= 10)}` : ''}`);
    console.log(`    peak memory <= 400 MB: ${full.peakMb.toFixed(0)} MB — ${verdict(full.peakMb <= 400)}; default JSON <= 10 MB: ${mb(size)} — ${verdict(size <= 10e6)}`);
    console.log(`    with rate response + bootstrap <= 3 s: ${fmt(rate.inner)} — ${verdict(rate.inner <= 3000)}`);
    if (r) console.log(`    one-stage alone, whole processes >= 20x: ${(r.wall / one.wall).toFixed(1)}x — ${verdict(r.wall / one.wall >= 20)}`);
  }
  console.log('');
}

{
  // A saved analysis of the largest network, opened through the api.
  const ws = join(dir, 'saved.manyfield');
  rmSync(ws, { force: true });
  for (const suffix of ['-wal', '-shm']) rmSync(ws + suffix, { force: true });
  const mapping = join(dir, 'mapping.json');
  writeFileSync(mapping, JSON.stringify(EXAMPLE_MAPPING));
  command(['import', '--workspace', ws, '--file', largest, '--map', mapping]);
  const saved = command(['analyze', '--workspace', ws, '--spec', specs.full, '--json', '--out', join(dir, 'out-saved.json')]);
  const db = new Database(ws, { readonly: true });
  const id = (db.prepare('SELECT max(id) AS id FROM analysis').get() as { id: number }).id;
  const results = (db.prepare('SELECT coalesce(sum(length(payload_json)), 0) AS b FROM analysis_result WHERE analysis_id = ?').get(id) as { b: number }).b;
  const trials = (db.prepare('SELECT coalesce(sum(length(summary_json) + length(trial) + coalesce(length(data_sha256), 0)), 0) AS b, count(*) AS n FROM analysis_trial WHERE analysis_id = ?').get(id) as { b: number; n: number });
  const spec = (db.prepare('SELECT length(spec_json) AS b FROM analysis WHERE id = ?').get(id) as { b: number }).b;
  const someTrial = (db.prepare('SELECT trial FROM analysis_trial WHERE analysis_id = ? AND position = ?').get(id, Math.floor(trials.n / 2)) as { trial: string }).trial;
  db.close();
  const t0 = performance.now();
  const child = spawnSync(process.execPath, [join(here, 'savedChild.mjs'), ws, String(id), someTrial], { cwd: root, encoding: 'utf8' });
  const wall = performance.now() - t0;
  const line = child.stderr.split('\n').find((l) => l.startsWith('BENCH '));
  if (child.status !== 0 || !line) throw new Error(`opening the saved analysis failed:\n${child.stderr}`);
  const b = JSON.parse(line.slice(6));
  const stored = results + trials.b + spec;
  console.log(`saved analysis of ${trials.n} trials (workspace analyze + save: command ${fmt(saved.inner)}, peak ${saved.peakMb.toFixed(0)} MB)`);
  console.log(`  stored: ${mb(stored)} (${mb(results)} in result rows, ${mb(trials.b)} in ${trials.n} trial rows) — target <= 10 MB: ${verdict(stored <= 10e6)}`);
  console.log(`  api analysis.list ${fmt(b.listMs)}; analysis.open summary ${fmt(b.openMs)} (first call, loading the store: ${fmt(b.openFirstMs)}) — target < 100 ms: ${verdict(b.openMs < 100)}; with the per-trial tables ${fmt(b.tablesMs)}`);
  console.log(`  api analysis.open with a page of 100 trials ${fmt(b.pageMs)}; analysis.trial detail of ${someTrial} (${b.detailPlots} plots, recomputed) ${fmt(b.detailAgainMs)} (first ${fmt(b.detailMs)}); median over ${b.detailTrials} other trials ${fmt(b.detailMedianMs)} — target < 20 ms: ${verdict(b.detailMedianMs < 20)}`);
  console.log(`  (child process wall ${fmt(wall)})`);
}
