// Plain-language flags with structured codes. A flag reports; it never removes a plot —
// plots leave the analysis only by an exclusion the user made and recorded.
import { plotName } from '../plotName.js';
import type { AliasedColumn, FTestRecord, PlotDiagnostic, SpatialCheck, TrialFlag } from './types.js';

/** Brown–Forsythe p below this is flagged. */
export const VARIANCE_ALPHA = 0.01;

export interface FlagInputs {
  readonly plots: readonly PlotDiagnostic[];
  readonly outlierThreshold: number;
  readonly cooksThreshold: number;
  readonly brownForsythe: FTestRecord;
  readonly spatial: SpatialCheck;
  readonly aliased: readonly AliasedColumn[];
  readonly missing: number;
  readonly excluded: number;
  readonly absent: readonly string[];
  readonly residualDf: number;
}

const fmt = (x: number | null): string => (x === null ? 'n/a' : Math.abs(x) < 1e-3 && x !== 0 ? x.toExponential(1) : x.toPrecision(3));

const capital = (s: string): string => s.charAt(0).toUpperCase() + s.slice(1);

export function buildFlags(f: FlagInputs): TrialFlag[] {
  const flags: TrialFlag[] = [];
  for (const p of f.plots) {
    if (p.studentized !== null && Math.abs(p.studentized) > f.outlierThreshold)
      flags.push({
        code: 'outlier-residual',
        plotId: p.plotId,
        label: p.label,
        treatment: p.treatment,
        message: `${capital(plotName(p))} (${p.treatment}) has a studentised residual of ${fmt(p.studentized)}, beyond ±${f.outlierThreshold}: check the field record. It stays in the analysis unless you exclude it with a reason.`,
      });
    if (p.cooksDistance !== null && p.cooksDistance > f.cooksThreshold)
      flags.push({
        code: 'influential-plot',
        plotId: p.plotId,
        label: p.label,
        treatment: p.treatment,
        message: `${capital(plotName(p))} (${p.treatment}) has Cook's distance ${fmt(p.cooksDistance)} (above 4/n = ${fmt(f.cooksThreshold)}): it moves the estimates more than most plots.`,
      });
  }
  const bf = f.brownForsythe;
  if (bf.available && bf.p !== null && bf.p < VARIANCE_ALPHA)
    flags.push({ code: 'unequal-variances', message: `The spread of residuals differs between treatments (Brown–Forsythe F = ${fmt(bf.f)}, p = ${fmt(bf.p)}). Standard errors assume a common variance; consider a transformation suited to the trait.` });
  const s = f.spatial;
  if (s.flagged) {
    const dir = [s.rows?.p !== null && s.rows?.p !== undefined && s.rows.p < 0.01 ? 'rows' : null, s.cols?.p !== null && s.cols?.p !== undefined && s.cols.p < 0.01 ? 'columns' : null].filter(Boolean).join(' and ');
    flags.push({
      code: 'spatial-trend',
      message: `The plots show a trend across the field${dir ? ` along the ${dir}` : ''} that the blocks do not remove (trend F = ${fmt(s.joint?.f ?? null)}, p = ${fmt(s.joint?.p ?? null)}; rows p = ${fmt(s.rows?.p ?? null)}, columns p = ${fmt(s.cols?.p ?? null)}). A row-column or spatial model is needed for this trial, and blocks laid out against the gradient in future trials.`,
    });
  }
  if (f.aliased.length > 0)
    flags.push({ code: 'aliased-terms', message: `Some model terms cannot be separated from others with these plots and were set aside: ${f.aliased.map((a) => `${a.term} ${a.level}`).join(', ')}.` });
  if (f.missing > 0) flags.push({ code: 'missing-plots', message: `${f.missing} plot${f.missing > 1 ? 's have' : ' has'} no value; means are adjusted for the layout and their standard errors reflect the loss.` });
  if (f.excluded > 0) flags.push({ code: 'excluded-plots', message: `${f.excluded} plot${f.excluded > 1 ? 's were' : ' was'} excluded by the user; the reasons are listed with the result.` });
  for (const t of f.absent) flags.push({ code: 'treatment-absent', treatment: t, message: `Treatment ${t} has no analysed plots in this trial; contrasts that need it are not estimable here.` });
  if (!(f.residualDf > 0)) flags.push({ code: 'no-error-df', message: 'No error degrees of freedom are left: standard errors, tests and intervals cannot be computed for this trial.' });
  return flags;
}
