// Bench for issue 15: the one-stage model with sites and years crossed, at programme scale —
// 500 sites over 8 years with gaps (each site run in a year with probability 0.75: about 3,000
// trials of 5 treatments x 3 blocks, 5% of plots missing), all seven random terms. The same CSV
// is fitted by the installed command (`manyfield analyze --data F --spec S --json`, one-stage
// only, Satterthwaite df, no LRT refits or profiles) and by lme4's lmer with the same terms
// (read.csv + lmer, timed inside R), in the same run; times, ratio and logLik agreement printed.
// Each side is timed `repeats` times and its fastest run kept (the machine is shared).
import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { simulateCrossed } from '../../test/engine/onestage/crossed/support/simulateCrossed.js';

export interface CrossedBenchSettings {
  readonly dir: string;
  readonly root: string;
  readonly cliChild: readonly string[];
  readonly sites: number;
  readonly years: number;
  readonly skipR: boolean;
  readonly repeats: number;
}

const fmt = (ms: number) => (ms >= 1000 ? `${(ms / 1000).toFixed(2)} s` : `${ms.toFixed(0)} ms`);

export function runCrossedBench(s: CrossedBenchSettings): void {
  const sim = simulateCrossed({ seed: 500, sites: s.sites, years: s.years, runProbability: 0.75, missing: 0.05 });
  const file = join(s.dir, `crossed-${s.sites}x${s.years}.csv`);
  writeFileSync(file, sim.csv);
  const spec = join(s.dir, 'spec-crossed.json');
  const withBootstrap = join(s.dir, 'spec-crossed-bootstrap.json');
  const terms = ['site', 'year', 'trial', 'block', 'treatment-by-site', 'treatment-by-year', 'treatment-by-trial'];
  const specFor = (prediction: string) =>
    JSON.stringify({
      trait: 'y',
      columns: { site: 'site', year: 'year', trial: 'env', block: 'block', treatment: 'trt', response: 'y' },
      control: 'CTL',
      contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }],
      twoStage: null,
      oneStage: { random: terms, df: 'satterthwaite', lrt: false, profile: false, prediction },
    });
  // lmer fits the model and nothing more: the comparison takes the plug-in new-site interval (a
  // formula at the fit); the default bootstrap interval (1,000 REML refits) is timed on its own below.
  writeFileSync(spec, specFor('plug-in-t'));
  writeFileSync(withBootstrap, specFor('bootstrap-tau2'));
  const plots = sim.csv.split('\n').length - 2;
  console.log(`Crossed sites x years: ${s.sites} sites over ${s.years} years with gaps, ${sim.network.trials.length} trials, ${plots} plots; random terms ${terms.join(', ')}`);
  const run = (specFile: string) => {
    let inner = Infinity;
    let wall = Infinity;
    let stdout = '';
    for (let rep = 0; rep < Math.max(1, s.repeats); rep++) {
      const t0 = performance.now();
      const r = spawnSync(process.execPath, [...s.cliChild, file, specFile], { cwd: s.root, encoding: 'utf8', maxBuffer: 1 << 30 });
      const line = r.stderr.split('\n').find((l) => l.startsWith('BENCH '));
      if (r.status !== 0 || !line) {
        console.log(`  manyfield analyze failed (${r.status}): ${r.stderr.split('\n').slice(0, 3).join(' ')}`);
        return null;
      }
      const ms = JSON.parse(line.slice(6)).totalMs as number;
      if (ms < inner) {
        inner = ms;
        stdout = r.stdout;
      }
      wall = Math.min(wall, performance.now() - t0);
    }
    return { inner, wall, stdout };
  };
  const fitted = run(spec);
  if (!fitted) return;
  const { inner, wall, stdout } = fitted;
  const report = JSON.parse(stdout) as { oneStage: { logLik: number; iterations: number; run?: { method?: string } } };
  const evaluations = /(\d+) criterion evaluations/.exec(report.oneStage.run?.method ?? '')?.[0];
  console.log(`  manyfield analyze --data F --spec S --json (fastest of ${Math.max(1, s.repeats)}): ${fmt(inner)} in the command, ${fmt(wall)} process wall; REML logLik ${report.oneStage.logLik.toFixed(6)} (${report.oneStage.iterations} AI-REML iterations${evaluations ? `, ${evaluations}` : ''})`);
  const boot = run(withBootstrap);
  if (boot) console.log(`  with the default bootstrap new-site-in-a-new-year interval (1,000 REML refits of the trials' own estimates; lmer has no counterpart): ${fmt(boot.inner)} in the command, of which about ${fmt(boot.inner - inner)} the bootstrap`);
  if (s.skipR) return;
  const script = `
suppressMessages(library(lme4))
t0 <- Sys.time()
d <- read.csv('${file}', stringsAsFactors = TRUE); d$year <- factor(d$year)
f <- lmer(y ~ 0 + trt + (1|site) + (1|year) + (1|env) + (1|env:block) + (1|site:trt) + (1|year:trt) + (1|env:trt), data = d, REML = TRUE)
cat(sprintf('secs=%.6f\\nloglik=%.10f\\n', as.numeric(difftime(Sys.time(), t0, units = 'secs')), as.numeric(logLik(f))))
`;
  const scriptFile = join(s.dir, 'crossed.R');
  writeFileSync(scriptFile, script);
  let rMs = Infinity;
  let rWall = Infinity;
  let rLl = NaN;
  for (let rep = 0; rep < Math.max(1, s.repeats); rep++) {
    const rt0 = performance.now();
    const rr = spawnSync('Rscript', ['--vanilla', scriptFile], { encoding: 'utf8', maxBuffer: 1 << 30 });
    rWall = Math.min(rWall, performance.now() - rt0);
    const secs = /secs=(.*)/.exec(rr.stdout);
    const ll = /loglik=(.*)/.exec(rr.stdout);
    if (rr.status !== 0 || !secs || !ll) {
      console.log(`  lme4 lmer failed (${rr.status}): ${rr.stderr.split('\n').slice(-3).join(' ')}`);
      return;
    }
    rMs = Math.min(rMs, Number(secs[1]) * 1000);
    rLl = Number(ll[1]);
  }
  const rel = Math.abs(report.oneStage.logLik - rLl) / Math.abs(rLl);
  console.log(`  lme4 lmer (default settings), read.csv + fit timed in R (fastest of ${Math.max(1, s.repeats)}): ${fmt(rMs)}, Rscript wall ${fmt(rWall)}; REML logLik ${rLl.toFixed(6)}`);
  console.log(`  ratio lme4/manyfield: ${(rMs / inner).toFixed(2)}x in-process, ${(rWall / wall).toFixed(2)}x wall (target >= 20x); logLik difference ${(report.oneStage.logLik - rLl).toExponential(3)} (relative ${rel.toExponential(2)}; positive = ours higher)`);
}
