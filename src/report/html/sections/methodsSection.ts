// Methods, written from the spec and the settings the analysis recorded, with the published
// methods cited (authors, year, journal).
import type { CompactAnalysisReport } from '../../../api/analysis/report.js';
import { termDisplayName } from '../../text/termNames.js';
import { esc, table, type Section } from '../markup.js';
import { trialSummaries } from '../reportInput.js';

interface SpecShape {
  readonly transform?: string;
  readonly contrasts?: readonly { name: string; coefficients?: Record<string, number>; divisor?: number; factor?: string; levels?: unknown[]; trend?: string; degree?: number }[];
  readonly oneStage?: { random?: string[]; residual?: string; df?: string } | null;
  readonly twoStage?: { tau2?: string; interval?: string; prediction?: string } | null;
  readonly moderators?: string[];
  readonly rateResponse?: { factor: string; model: string; priceRatio: number; at?: Record<string, unknown>; profitableWithin?: number; bootstrap?: number; seed?: number; prices?: { input: number; crop: number; currency?: string } } | null;
}

export const REFERENCES: Record<string, string> = {
  reml: 'Patterson, H. D. & Thompson, R. (1971). Recovery of inter-block information when block sizes are unequal. Biometrika 58, 545–554.',
  ai: 'Gilmour, A. R., Thompson, R. & Cullis, B. R. (1995). Average information REML: an efficient algorithm for variance parameter estimation in linear mixed models. Biometrics 51, 1440–1450.',
  dl: 'DerSimonian, R. & Laird, N. (1986). Meta-analysis in clinical trials. Controlled Clinical Trials 7, 177–188.',
  pm: 'Paule, R. C. & Mandel, J. (1982). Consensus values and weighting factors. Journal of Research of the National Bureau of Standards 87, 377–385.',
  remlMeta: 'Viechtbauer, W. (2005). Bias and efficiency of meta-analytic variance estimators in the random-effects model. Journal of Educational and Behavioral Statistics 30, 261–293.',
  hksj: 'Hartung, J. & Knapp, G. (2001). On tests of the overall treatment effect in meta-analysis with normally distributed responses. Statistics in Medicine 20, 1771–1782; Sidik, K. & Jonkman, J. N. (2002). A simple confidence interval for meta-analysis. Statistics in Medicine 21, 3153–3159.',
  prediction: 'Higgins, J. P. T., Thompson, S. G. & Spiegelhalter, D. J. (2009). A re-evaluation of random-effects meta-analysis. Journal of the Royal Statistical Society A 172, 137–159.',
  bootstrapPrediction: 'Nagashima, K., Noma, H. & Furukawa, T. A. (2019). Prediction intervals for random-effects meta-analysis: a confidence distribution approach. Statistical Methods in Medical Research 28, 1689–1702.',
  i2: 'Higgins, J. P. T. & Thompson, S. G. (2002). Quantifying heterogeneity in a meta-analysis. Statistics in Medicine 21, 1539–1558.',
  qprofile: 'Viechtbauer, W. (2007). Confidence intervals for the amount of heterogeneity in meta-analysis. Statistics in Medicine 26, 37–52.',
  satterthwaite: 'Satterthwaite, F. E. (1946). An approximate distribution of estimates of variance components. Biometrics Bulletin 2, 110–114.',
  kr: 'Kenward, M. G. & Roger, J. H. (1997). Small sample inference for fixed effects from restricted maximum likelihood. Biometrics 53, 983–997.',
  eonr: 'Cerrato, M. E. & Blackmer, A. M. (1990). Comparison of models for describing corn yield response to nitrogen fertilizer. Agronomy Journal 82, 138–143.',
  twoStage: 'Piepho, H.-P., Möhring, J., Schulz-Streeck, T. & Ogutu, J. O. (2012). A stage-wise approach for the analysis of multi-environment trials. Biometrical Journal 54, 844–860.',
};

const TAU2_WORDS: Record<string, [string, string]> = {
  reml: ['restricted maximum likelihood (REML)', 'remlMeta'],
  ml: ['maximum likelihood', 'remlMeta'],
  dl: ['the DerSimonian–Laird moment estimator', 'dl'],
  pm: ['the Paule–Mandel estimator', 'pm'],
  fixed: ['none (a common-effect model, tau² fixed at 0)', 'dl'],
};

export function contrastDescription(c: NonNullable<SpecShape['contrasts']>[number]): string {
  if (c.coefficients) {
    const terms = Object.entries(c.coefficients).map(([t, v]) => `${v > 0 ? '+' : '−'}${Math.abs(v)}·${esc(t)}`).join(' ');
    return `coefficients ${terms}${c.divisor && c.divisor !== 1 ? `, divided by ${c.divisor}` : ''}`;
  }
  if (c.trend) return `orthogonal polynomial trend of degree ${c.degree ?? 1} over ${esc(c.trend)}, coefficients computed in each trial on the rates it tested (their actual spacing)`;
  if (c.factor) return `levels ${(c.levels ?? []).map((l) => esc(l)).join(' against ')} of ${esc(c.factor)}, averaged over the combinations tested at both levels in each trial`;
  return 'as defined in the spec';
}

export function methodsSection(a: CompactAnalysisReport, specIn: unknown): Section {
  const spec = (specIn ?? {}) as SpecShape;
  const cites = new Set<string>(['twoStage']);
  const p: string[] = [];
  const designs = [...new Set(trialSummaries(a).map((t) => t.entry.design))];
  p.push(
    `<h3>Each trial</h3><p>Each trial was analysed on its own with the linear model of its design (${designs.map(esc).join(', ')}): treatment effects plus the blocks, or rows and columns, of its layout, fitted by least squares with missing plots allowed. Adjusted treatment means, their covariance and each contrast come from that fit, with the trial's residual degrees of freedom. Transformation: <b>${esc(a.settings.transform)}</b>${a.settings.transform === 'none' ? ' (effects on the scale of measurement)' : ''}. Intervals are ${Math.round(a.settings.confidence * 100)}%.</p>`,
  );
  const rows = (spec.contrasts ?? []).map((c) => {
    const pooled = a.twoStage.pooled.find((x) => x.name === c.name);
    return [`<b>${esc(c.name)}</b>`, esc(pooled?.meaning ?? ''), contrastDescription(c), esc(a.contrastUnits[c.name] ?? '')];
  });
  p.push('<h3>Contrasts</h3>', table(['Contrast', 'What it measures', 'Definition', 'Unit'], rows));
  const ts = spec.twoStage;
  if (ts !== null) {
    const tau2 = TAU2_WORDS[(ts?.tau2 ?? 'reml').toLowerCase()] ?? TAU2_WORDS.reml;
    cites.add(tau2[1]);
    const hksj = (ts?.interval ?? 'hksj').toLowerCase() === 'hksj';
    if (hksj) cites.add('hksj');
    const boot = (ts?.prediction ?? 'bootstrap-tau2').toLowerCase() === 'bootstrap-tau2';
    cites.add(boot ? 'bootstrapPrediction' : 'prediction');
    cites.add('i2');
    cites.add('qprofile');
    p.push(
      `<h3>Pooling across site-years (two-stage)</h3><p>Each contrast's per-trial estimates were pooled in a random-effects model with inverse-variance weights. Between-trial variance tau² by ${tau2[0]}; the interval of the mean effect by ${hksj ? 'the Hartung–Knapp–Sidik–Jonkman method (t on k−1 df with the variance rescaled)' : 'the Wald normal approximation'}; tau²'s interval by the Q-profile method; heterogeneity by Cochran's Q, I² and H². The prediction interval for a new site and the chances of a positive and a profitable effect there come from ${boot ? 'a parametric bootstrap over the confidence distribution of tau² (Nagashima, Noma & Furukawa 2019)' : 'the plug-in t interval on k−2 df (Higgins, Thompson & Spiegelhalter 2009)'}. The break-even threshold is ${a.settings.threshold} ${esc(a.unit ?? '')}. Trials that could not estimate a contrast are left out of that contrast's pool and listed.${(spec.moderators ?? []).length ? ` Moderators (meta-regression and subgroups): ${(spec.moderators ?? []).map(esc).join(', ')}.` : ''} Sensitivity: leave-one-out, influence and cumulative pooling by year.</p>`,
    );
  }
  const os = spec.oneStage;
  if (os !== null && a.oneStage) {
    cites.add('reml');
    cites.add('ai');
    const df = (os?.df ?? 'satterthwaite').toLowerCase();
    cites.add(df === 'kenward-roger' ? 'kr' : 'satterthwaite');
    p.push(
      `<h3>One-stage mixed model</h3><p>All plots in one REML model (Patterson & Thompson 1971), fitted by average-information REML (Gilmour, Thompson & Cullis 1995): treatments as fixed effects; random terms ${(os?.random ?? ['trial', 'block', 'treatment-by-trial']).map((t) => esc(termDisplayName(t))).join(', ')}; residual variance ${os?.residual === 'per-trial' ? 'one per trial' : 'common to all trials'}; contrast degrees of freedom by ${df === 'kenward-roger' ? 'Kenward–Roger' : df === 'residual' ? 'the residual degrees of freedom' : 'Satterthwaite'}. Its contrasts are compared with the two-stage results as a check.</p>`,
    );
  }
  const rr = spec.rateResponse;
  if (rr && a.rateResponse) {
    cites.add('eonr');
    p.push(
      `<h3>Response to rate</h3><p>Each trial's yield was fitted against the rate of ${esc(rr.factor)}${rr.at ? ` at ${Object.entries(rr.at).map(([k, v]) => `${esc(k)} = ${esc(v)}`).join(', ')}` : ''} with the ${esc(rr.model)} model${rr.model === 'best' ? ' chosen per trial by AICc' : ''}. The pooled curve is the mean of the trials' own curves (each trial counts once) over the rates tested in every trial. Economic optimum rate: where the extra yield per unit of input equals the price ratio ${rr.priceRatio} (${esc(a.rateResponse.yieldUnit ?? 'yield units')} per ${esc(a.rateResponse.rateUnit ?? 'rate unit')}: input price over crop price)${rr.prices ? `; prices ${rr.prices.input} per ${esc(a.rateResponse.rateUnit ?? '')} and ${rr.prices.crop} per ${esc(a.rateResponse.yieldUnit ?? '')}${rr.prices.currency ? ` ${esc(rr.prices.currency)}` : ''}` : ''}. Its interval: ${esc(a.rateResponse.pooled.method)}${rr.bootstrap ? ` (${rr.bootstrap} bootstrap replicates over trials, seed ${rr.seed ?? '-'})` : ''}. Near-best rates: those whose mean net return is within ${rr.profitableWithin ?? 0} ${esc(a.rateResponse.yieldUnit ?? '')} of the best. Price sensitivity: the optimum at multiples of the price ratio.</p><ul class="forms">${a.rateResponse.curveForms.map((f) => `<li>${esc(f)}</li>`).join('')}</ul>`,
    );
  }
  p.push('<h3>Methods cited</h3>', `<ol class="refs">${[...cites].map((c) => `<li>${esc(REFERENCES[c])}</li>`).join('')}</ol>`);
  return { id: 'methods', title: 'Methods', html: p.join('\n'), newPage: true };
}
