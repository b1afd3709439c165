// A saved analysis of n invented trials, in the shape `analysis.open` returns (compact pools,
// one summary per trial), for timing the screens only. Estimates are drawn from a seeded
// generator; nothing here is a statistical result.

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s * 1664525 + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

export function syntheticSavedAnalysis(n: number, seed: number) {
  const u = rng(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  const trials = Array.from({ length: n }, (_, i) => {
    const site = `S${String(Math.floor(i / 6) + 1).padStart(4, '0')}`;
    const year = 2015 + (i % 6);
    const estimate = 0.8 + 0.3 * normal();
    const se = 0.15 + 0.1 * u();
    return { trial: `${site}-${year}`, site, year, estimate, se, df: 18, lower: estimate - 2.1 * se, upper: estimate + 2.1 * se };
  });
  const w = trials.map((t) => 1 / (t.se * t.se + 0.09));
  const total = w.reduce((a, b) => a + b, 0);
  const mean = trials.reduce((a, t, i) => a + w[i] * t.estimate, 0) / total;
  const se = Math.sqrt(1 / total);
  const column = <T,>(f: (i: number) => T) => trials.map((_, i) => f(i));
  const pooled = {
    name: 'treated_vs_control',
    meaning: 'mean of the treated treatments minus the control',
    leftOut: [],
    estimate: mean, se, lower: mean - 1.96 * se, upper: mean + 1.96 * se, p: 1e-6,
    tau2: 0.09, tau: 0.3, tau2Lower: 0.07, tau2Upper: 0.11, tau2AtBoundary: false,
    Q: 3 * n, Qdf: n - 1, Qp: 1e-9, I2: 0.6, I2FromTau2: 0.6, H2: 2.5, H2FromTau2: 2.5,
    predictionLower: mean - 0.6, predictionUpper: mean + 0.6, probPositive: 0.97, probAboveThreshold: 0.8,
    prediction: { method: 'plug-in-t', draws: null, seed: null, description: '', probabilities: '', lower: mean - 0.6, upper: mean + 0.6, probPositive: 0.97, probAboveThreshold: 0.8, plugInT: { lower: mean - 0.6, upper: mean + 0.6, probPositive: 0.97, probAboveThreshold: 0.8 } },
    k: n, df: n - 1, hksjScale: 1,
    method: { tau2: 'REML', interval: 'HKSJ', prediction: 'plug-in t', probabilities: '', converged: true, iterations: 5 },
    weights: { trial: column((i) => trials[i].trial), weight: w, share: w.map((x) => x / total) },
    sensitivity: {
      leaveOneOut: { trial: column((i) => trials[i].trial), estimate: column(() => mean), se: column(() => se), tau2: column(() => 0.09), lower: column(() => mean - 1.96 * se), upper: column(() => mean + 1.96 * se) },
      influence: { trial: column((i) => trials[i].trial), standardisedResidual: column(() => 0), studentisedDeletedResidual: column(() => 0), cooksDistance: column(() => 0), tau2Change: column(() => 0), leverage: column(() => 1 / n) },
      cumulative: { trial: column((i) => trials[i].trial), year: column((i) => trials[i].year), k: column((i) => i + 1), estimate: column(() => mean), se: column(() => se), tau2: column(() => 0.09), lower: column(() => mean - 1.96 * se), upper: column(() => mean + 1.96 * se) },
      notes: [],
    },
    notes: [],
  };
  const createdAt = new Date(Date.UTC(2026, 0, 1)).toISOString();
  return {
    id: 900000 + n,
    name: `Synthetic ${n} trials`,
    spec: { trait: 'yield', contrasts: [{ name: 'treated_vs_control', kind: 'treated-vs-control' }] },
    dataFingerprint: 'synthetic'.padEnd(64, '0'),
    appVersion: 'bench',
    createdAt,
    status: 'complete',
    results: {
      provenance: { source: 'synthetic', dataFingerprint: 'synthetic'.padEnd(64, '0'), appVersion: 'bench', createdAt },
      trait: 'yield', unit: 't/ha', settings: { transform: 'none', confidence: 0.95, threshold: 0.3 }, contrastUnits: { treated_vs_control: 't/ha' },
      trialsAnalysed: n, oneStage: null, twoStage: { pooled: [pooled], trialCount: n }, agreement: [], rateResponse: null, warnings: [], cautions: [],
    },
    trials: trials.map((t, i) => ({ position: i, trial: t.trial, dataSha256: null, summary: { trial: t.trial, site: t.site, year: t.year, contrasts: [{ name: 'treated_vs_control', estimable: true, estimate: t.estimate, se: t.se, df: t.df, p: 0.01, lower: t.lower, upper: t.upper }] } })),
  };
}
