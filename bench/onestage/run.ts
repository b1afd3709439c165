// Bench for issue 4: one-stage REML at network scale against R in the same run.
//   npx tsx bench/onestage/run.ts [--crossed-only] [--skip-crossed] [--crossed-sites 500] [--crossed-years 8] [--sizes 250,1000,4000] [--per-trial 200] [--per-trial-growth 1000,4000] [--repeats 2] [--skip-r]
// 1. Common residual: networks of 250, 1,000 and 4,000 trials (7 treatments x 4 blocks, 28
//    plots each) written as CSV; each is fitted by a fresh `node` process running
//    bench/onestage/fitCsv.ts (read the CSV, fit, print the JSON result) and by Rscript
//    (read.csv + lme4::lmer). Both report their own read+fit time, excluding interpreter start-up
//    (and loading lme4), and the wall time of the whole process; both ratios are printed. The
//    installed command (`manyfield analyze --data F --spec S --json`) is timed on the same file.
// 2. Per-trial residual at 200 trials vs glmmTMB (dispformula = ~env, REML = TRUE): with
//    Satterthwaite df, like for like with glmmTMB's Wald output, and through the command.
//    Then the per-trial model on larger networks (ours only: glmmTMB needs minutes there), to
//    show its time growing linearly with trials.
// 3. Kenward–Roger df for one contrast at the largest size, timed in-process after the fit.
import { spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { simulateNetwork } from '../../test/engine/onestage/support/simulateNetwork.js';
import { buildNetworkStatistics } from '../../src/engine/onestage/sufficientStatistics.js';
import { parameterLayout } from '../../src/engine/onestage/parameters.js';
import { completeEvaluation, modelFrame } from '../../src/engine/onestage/remlCriterion.js';
import { optimiseReml } from '../../src/engine/onestage/optimise.js';
import { startValues } from '../../src/engine/onestage/startValues.js';
import { activeParameterTable } from '../../src/engine/onestage/trialParameters.js';
import { secondOrder, kenwardRogerU } from '../../src/engine/onestage/secondOrder.js';
import { kenwardRogerContrast } from '../../src/engine/onestage/contrastInference.js';
import { kenwardRogerWeights } from '../../src/engine/onestage/kenwardRogerWeights.js';
import { fitOneStage } from '../../src/engine/onestage/fitOneStage.js';
import { networkFromCsv } from './csvNetwork.js';
import { readFileSync } from 'node:fs';
import { runCrossedBench } from './crossed.js';

const here = dirname(fileURLToPath(import.meta.url));
const root = join(here, '..', '..');
const args = process.argv.slice(2);
const arg = (name: string): string | undefined => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const sizes = (arg('--sizes') ?? '250,1000,4000').split(',').map(Number);
const perTrialSize = Number(arg('--per-trial') ?? 200);
const perTrialGrowth = (arg('--per-trial-growth') ?? '1000,4000').split(',').filter(Boolean).map(Number);
const skipR = args.includes('--skip-r');
/** Each timing is the fastest of this many runs, for both sides alike (the machine is shared). */
const repeats = Number(arg('--repeats') ?? 2);
const dir = join(tmpdir(), 'manyfield-bench-onestage');
mkdirSync(dir, { recursive: true });

interface Timing {
  readonly inner: number;
  /** CPU time of the read+fit part (user + system). */
  readonly cpu: number;
  readonly wall: number;
  readonly logLik: number;
  readonly note: string;
}

function run(cmd: string, argv: string[]): { stdout: string; stderr: string; wall: number } {
  const t0 = performance.now();
  const r = spawnSync(cmd, argv, { cwd: root, encoding: 'utf8', maxBuffer: 1 << 30 });
  const wall = performance.now() - t0;
  if (r.status !== 0) throw new Error(`${cmd} ${argv.join(' ')} failed (${r.status}):\n${r.stderr}`);
  return { stdout: r.stdout, stderr: r.stderr, wall };
}

// Run the child as compiled JavaScript, as the installed CLI is (a CommonJS bundle): bundle
// fitCsv.ts with the esbuild that tsx already brings; fall back to running it through tsx.
async function compiled(name: string): Promise<{ args: string[]; kind: string }> {
  try {
    const esbuild = await import('esbuild');
    // inside the project (node_modules/.cache) so the bundle resolves native packages like better-sqlite3
    const outDir = join(root, 'node_modules', '.cache', 'manyfield-bench');
    mkdirSync(outDir, { recursive: true });
    const outfile = join(outDir, name.replace(/\.ts$/, '.cjs'));
    await esbuild.build({
      entryPoints: [join(here, name)],
      bundle: true,
      platform: 'node',
      format: 'cjs',
      target: 'node20',
      outfile,
      external: ['better-sqlite3'],
      logLevel: 'silent',
    });
    return { args: [outfile], kind: `node on an esbuild bundle of bench/onestage/${name}` };
  } catch {
    return { args: ['--import', 'tsx', join(here, name)], kind: `node --import tsx bench/onestage/${name}` };
  }
}
// 4. Sites and years crossed (bench/onestage/crossed.ts); `--crossed-only` runs just that case.
const crossedSettings = { dir, root, cliChild: [join(here, 'cliChild.cjs')], sites: Number(arg('--crossed-sites') ?? 500), years: Number(arg('--crossed-years') ?? 8), skipR, repeats };
if (args.includes('--crossed-only')) {
  runCrossedBench(crossedSettings);
  process.exit(0);
}
const child = await compiled('fitCsv.ts');
const childArgs = child.args;
const childKind = child.kind;
// The command as installed: `npm run bench:onestage` builds dist/ (and its bundle) first.
const cliChild = { args: [join(here, 'cliChild.cjs')], kind: 'the build\'s own bundle, dist/cli/bundle.cjs, as bin/manyfield.cjs runs it' };
// one-stage only: two-stage pooling (and with it the trial stage) is switched off
function writeSpec(residual: 'common' | 'per-trial'): string {
  const file = join(dir, `spec-onestage-${residual}.json`);
  writeFileSync(
    file,
    JSON.stringify({
      trait: 'y',
      columns: { trial: 'env', block: 'block', treatment: 'trt', response: 'y' },
      control: 'CTL',
      contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }],
      twoStage: null,
      // lme4 and glmmTMB fit the model only: no likelihood-ratio refits or likelihood profiles
      // on our side either (both are on by default for networks of up to 200 trials).
      oneStage: { random: ['trial', 'block', 'treatment-by-trial'], residual, df: 'satterthwaite', lrt: false, profile: false },
    }),
  );
  return file;
}
const specFile = writeSpec('common');
const perTrialSpecFile = writeSpec('per-trial');

/** `manyfield analyze --data F --spec S --json` in a fresh process; null if the command fails. */
function cli(file: string, spec = specFile): { inner: number; cpu: number; wall: number } | string {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [...cliChild.args, file, spec], { cwd: root, encoding: 'utf8', maxBuffer: 1 << 30 });
  const wall = performance.now() - t0;
  const line = r.stderr.split('\n').find((l) => l.startsWith('BENCH '));
  if (r.status !== 0 || !line) return `analyze failed (${r.status}): ${r.stderr.split('\n').slice(0, 3).join(' ')}`;
  const b = JSON.parse(line.slice(6));
  return { inner: b.totalMs, cpu: b.cpuMs, wall };
}

function ours(file: string, residual: 'common' | 'per-trial', lrt: boolean, df: 'satterthwaite' | 'residual' = 'satterthwaite'): Timing {
  const r = run(process.execPath, [...childArgs, file, residual, df, lrt ? 'lrt' : 'no-lrt']);
  const line = r.stderr.split('\n').find((l) => l.startsWith('BENCH '));
  if (!line) throw new Error(`fitCsv printed no BENCH line:\n${r.stderr}`);
  const b = JSON.parse(line.slice(6));
  const note = `cpu ${b.cpuMs.toFixed(0)} ms; ${b.iterations} AI iterations, converged ${b.converged}; read ${b.readMs.toFixed(0)} ms, fit ${b.fitMs.toFixed(0)} ms, print ${b.printMs.toFixed(0)} ms (${(b.bytes / 1e6).toFixed(1)} MB JSON)`;
  return { inner: b.totalMs, cpu: b.cpuMs, wall: r.wall, logLik: b.logLik, note };
}

/** Fastest of `repeats` runs (by inner time); wall and cpu taken as their own minima. */
function best(f: () => Timing): Timing {
  const runs = Array.from({ length: repeats }, f);
  const fastest = runs.reduce((a, b) => (b.inner < a.inner ? b : a));
  return { ...fastest, wall: Math.min(...runs.map((r) => r.wall)), cpu: Math.min(...runs.map((r) => r.cpu)) };
}

/**
 * Warm engine: read+fit+print in this process after two untimed fits, as in the desktop app,
 * whose worker keeps the engine compiled between analyses. Fastest of `repeats` timed fits.
 */
function warm(file: string, residual: 'common' | 'per-trial'): number {
  const once = (): number => {
    const t0 = performance.now();
    const network = networkFromCsv(readFileSync(file, 'utf8'));
    const r = fitOneStage(network, [], { random: ['trial', 'block', 'treatment-by-trial'], residual, df: 'satterthwaite', confidence: 0.95, lrt: false, profile: false });
    JSON.stringify(r);
    return performance.now() - t0;
  };
  once();
  once();
  return Math.min(...Array.from({ length: repeats }, once));
}

/** The installed command on `file`, fastest of `repeats`, with its ratios against the reference run `ref`. */
function commandLine(file: string, spec: string, ref: Timing | null): void {
  const runs = Array.from({ length: repeats }, () => cli(file, spec));
  const ok = runs.filter((r): r is { inner: number; cpu: number; wall: number } => typeof r !== 'string');
  if (ok.length === 0) {
    console.log(`  manyfield analyze --data --spec --json: ${runs[0] as string}`);
    return;
  }
  const t = Math.min(...ok.map((r) => r.inner));
  const wall = Math.min(...ok.map((r) => r.wall));
  console.log(`  manyfield analyze --data F --spec S --json (${cliChild.kind}; intake + one-stage with Satterthwaite df, no LRT refits or profiles, pooling off): ${fmt(t)} in the command, ${fmt(wall)} process wall${ref ? `; reference/analyze ${(ref.inner / t).toFixed(1)}x (in-process), ${(ref.wall / wall).toFixed(1)}x (wall)` : ''}`);
}

function value(out: string, name: string): number {
  const m = new RegExp(`^${name}=(.*)$`, 'm').exec(out);
  if (!m) throw new Error(`R printed no ${name}:\n${out}`);
  return Number(m[1]);
}

function rTiming(script: string): Timing {
  const file = join(dir, 'bench.R');
  writeFileSync(file, script);
  const r = run('Rscript', ['--vanilla', file]);
  const note = /^note=(.*)$/m.exec(r.stdout)?.[1] ?? '';
  return { inner: value(r.stdout, 'inner'), cpu: value(r.stdout, 'cpu'), wall: r.wall, logLik: value(r.stdout, 'loglik'), note };
}

const lme4 = (file: string): Timing =>
  rTiming(`suppressMessages(library(lme4))
t0 <- proc.time()
d <- read.csv('${file}', stringsAsFactors = TRUE)
f <- lmer(y ~ trt + (1|env) + (1|env:block) + (1|env:trt), data = d, REML = TRUE)
t1 <- proc.time() - t0
cat(sprintf('inner=%.6f\\ncpu=%.6f\\nloglik=%.10f\\n', 1000 * t1[['elapsed']], 1000 * (t1[['user.self']] + t1[['sys.self']]), as.numeric(logLik(f))))
msg <- f@optinfo$conv$lme4$messages
cat(sprintf('note=%s\\n', if (length(msg)) paste('lme4 says:', paste(gsub('\\n', ' ', msg), collapse = ' | ')) else 'lme4 gave no convergence message'))
`);

const glmmTmb = (file: string): Timing =>
  rTiming(`suppressMessages(library(glmmTMB))
t0 <- proc.time()
d <- read.csv('${file}', stringsAsFactors = TRUE)
g <- glmmTMB(y ~ trt + (1|env) + (1|env:block) + (1|env:trt), dispformula = ~env, data = d, REML = TRUE)
t1 <- proc.time() - t0
cat(sprintf('inner=%.6f\\ncpu=%.6f\\nloglik=%.10f\\n', 1000 * t1[['elapsed']], 1000 * (t1[['user.self']] + t1[['sys.self']]), as.numeric(logLik(g))))
`);

const fmt = (ms: number): string => (ms >= 10000 ? `${(ms / 1000).toFixed(1)} s` : `${ms.toFixed(0)} ms`);

function report(label: string, a: Timing, b: Timing | null, refName: string): void {
  console.log(label);
  console.log(`  manyfield  read+fit+print ${fmt(a.inner).padStart(8)} (cpu ${fmt(a.cpu).padStart(8)})   process wall ${fmt(a.wall).padStart(8)}   logLik ${a.logLik.toFixed(6)}   ${a.note}`);
  if (!b) return;
  console.log(`  ${refName.padEnd(10)} read+fit       ${fmt(b.inner).padStart(8)} (cpu ${fmt(b.cpu).padStart(8)})   process wall ${fmt(b.wall).padStart(8)}   logLik ${b.logLik.toFixed(6)}   ${b.note}`);
  console.log(`  ratio ${refName}/manyfield: ${(b.inner / a.inner).toFixed(1)}x read+fit, ${(b.cpu / a.cpu).toFixed(1)}x cpu, ${(b.wall / a.wall).toFixed(1)}x process wall;  |logLik difference| ${Math.abs(a.logLik - b.logLik).toExponential(2)}`);
}

console.log(`one-stage REML bench — ${new Date().toISOString()} — node ${process.version}`);
console.log('model: y = treatment means + trial + block within trial + treatment by trial + residual, REML');
console.log(`manyfield side: ${childKind}; times are wall clock inside each process (read+fit+print, R: read.csv+fit), its CPU time, and the whole process; fastest of ${repeats} runs each side\n`);

const perTrialMs: { trials: number; ms: number }[] = [];
let largest = '';
for (const n of sizes) {
  const sim = simulateNetwork({ seed: 4000 + n, trials: n });
  const file = join(dir, `network-${n}.csv`);
  writeFileSync(file, sim.csv);
  largest = file;
  const a = best(() => ours(file, 'common', false));
  const b = skipR ? null : best(() => lme4(file));
  report(`${n} trials x 28 plots, common residual (no LRT refits)`, a, b, 'lme4');
  perTrialMs.push({ trials: n, ms: a.inner });
  const w = warm(file, 'common');
  console.log(`  warm engine (in-process, after two fits): manyfield read+fit+print ${fmt(w)}${b ? `; lme4/manyfield ${(b.inner / w).toFixed(1)}x` : ''}`);
  const c = best(() => ours(file, 'common', true));
  console.log(`  with the 3 likelihood-ratio refits: manyfield read+fit+print ${fmt(c.inner)}`);
  commandLine(file, specFile, b);
  console.log('');
}
if (perTrialMs.length > 1) {
  const f = perTrialMs[0];
  console.log('growth (read+fit+print per trial, relative to the smallest network):');
  for (const p of perTrialMs) console.log(`  ${String(p.trials).padStart(5)} trials: ${(p.ms / p.trials).toFixed(3)} ms/trial (${(p.ms / p.trials / (f.ms / f.trials)).toFixed(2)}x)`);
  console.log('');
}

if (perTrialSize > 0) {
  const sim = simulateNetwork({ seed: 77, trials: perTrialSize, residualSpread: [0.5, 2] });
  const file = join(dir, `network-${perTrialSize}-hetero.csv`);
  writeFileSync(file, sim.csv);
  const a = best(() => ours(file, 'per-trial', false));
  const b = skipR ? null : best(() => glmmTmb(file));
  report(`${perTrialSize} trials, one residual variance per trial (no LRT refits)`, a, b, 'glmmTMB');
  const w = warm(file, 'per-trial');
  console.log(`  warm engine (in-process, after two fits): manyfield read+fit+print ${fmt(w)}${b ? `; glmmTMB/manyfield ${(b.inner / w).toFixed(1)}x` : ''}`);
  if (b) console.log(`  logLik agreement within 1e-4: ${Math.abs(a.logLik - b.logLik) < 1e-4 ? 'yes' : 'NO'}`);
  // glmmTMB reports Wald statistics (no small-sample df); the same output on our side skips the
  // second-order terms that Satterthwaite df need (variance-component SEs and BLUPs stay)
  const wald = best(() => ours(file, 'per-trial', false, 'residual'));
  console.log(`  like for like with glmmTMB's output (no small-sample df): manyfield read+fit+print ${fmt(wald.inner)}, process wall ${fmt(wald.wall)}${b ? `; glmmTMB/manyfield ${(b.inner / wald.inner).toFixed(1)}x read+fit, ${(b.wall / wald.wall).toFixed(1)}x process wall` : ''}`);
  commandLine(file, perTrialSpecFile, b);
  const growth = [{ trials: perTrialSize, ms: a.inner }];
  for (const n of perTrialGrowth) {
    const big = simulateNetwork({ seed: 77 + n, trials: n, residualSpread: [0.5, 2] });
    const bigFile = join(dir, `network-${n}-hetero.csv`);
    writeFileSync(bigFile, big.csv);
    const t = best(() => ours(bigFile, 'per-trial', false));
    growth.push({ trials: n, ms: t.inner });
    console.log(`  ${n} trials, one residual per trial: manyfield read+fit+print ${fmt(t.inner)} (${t.note})`);
  }
  if (growth.length > 1) console.log(`  growth: ${growth.map((g) => `${g.trials} trials ${(g.ms / g.trials).toFixed(3)} ms/trial`).join(', ')}`);
  console.log('');
}

{
  // Kenward–Roger df for one contrast on the largest network, after the REML fit
  const n = sizes[sizes.length - 1];
  const sim = simulateNetwork({ seed: 4000 + n, trials: n });
  const stats = buildNetworkStatistics(sim.network, ['trial', 'block', 'treatment-by-trial']);
  const frame = modelFrame(stats, parameterLayout(stats, 'common'));
  const fit = optimiseReml(frame, startValues(frame));
  const p = stats.treatments.length;
  const l = Float64Array.from({ length: p }, (_, j) => (j === 0 ? -1 : 1 / (p - 1)));
  const t0 = performance.now();
  const active = activeParameterTable(frame);
  const ev = completeEvaluation(frame, fit.evaluation);
  const so = secondOrder(frame, ev, fit.score, active);
  const kr = kenwardRogerWeights(so, fit.atZero, frame.sharedParameters);
  const u = kenwardRogerU(frame, ev, so, kr, active);
  const r = kenwardRogerContrast(ev, so, kr, u, l);
  const ms = performance.now() - t0;
  console.log(`Kenward–Roger df for treated-vs-control at ${n} trials: ${r.df.toFixed(3)} (se ${Math.sqrt(r.variance).toPrecision(6)}) in ${fmt(ms)} after the fit (target < 2 s)`);
  void largest;
}

if (!args.includes('--skip-crossed')) runCrossedBench(crossedSettings);
