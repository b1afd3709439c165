// One-stage and two-stage answers side by side; a gap of more than half a standard error is
// worth a user's attention, with the usual reasons listed.
export interface StageAgreement {
  readonly name: string;
  readonly oneStage: number | null;
  readonly oneStageSe: number | null;
  readonly twoStage: number | null;
  readonly twoStageSe: number | null;
  /** Difference in units of the two-stage standard error. */
  readonly differenceInSe: number | null;
  readonly agree: boolean | null;
  /** Why the two are not compared (they estimate different quantities), or what differs between two that are. */
  readonly note?: string;
}

const USUAL_REASONS =
  'usual reasons: error variances that differ between trials (a common residual in the one-stage model weights trials differently), trials or plots used by one analysis but not the other (a contrast not estimable in some trials), outliers, strong treatment-by-trial interaction, or a transformation';

interface NamedEstimate {
  readonly name: string;
  readonly estimate: number | null;
  readonly se: number | null;
}

/** `caveats`: notes for contrasts that are compared but whose two versions differ in what they average. */
export function compareStages(oneStage: readonly NamedEstimate[], twoStage: readonly NamedEstimate[], warnings: string[], notCompared: ReadonlyMap<string, string> = new Map(), caveats: ReadonlyMap<string, string> = new Map()): StageAgreement[] {
  return twoStage.map((two) => {
    const compared = compareOne(oneStage, two, warnings, notCompared);
    const caveat = caveats.get(two.name);
    if (caveat === undefined || compared.note !== undefined) return compared;
    warnings.push(`contrast "${two.name}": one-stage and two-stage estimates are ${caveat}`);
    return { ...compared, note: caveat };
  });
}

function compareOne(oneStage: readonly NamedEstimate[], two: NamedEstimate, warnings: string[], notCompared: ReadonlyMap<string, string>): StageAgreement {
  const one = oneStage.find((o) => o.name === two.name);
  const note = notCompared.get(two.name);
  if (note !== undefined) {
    warnings.push(`contrast "${two.name}": one-stage and two-stage estimates are ${note}`);
    return { name: two.name, oneStage: one?.estimate ?? null, oneStageSe: one?.se ?? null, twoStage: two.estimate, twoStageSe: two.se, differenceInSe: null, agree: null, note };
  }
  if (!one || one.estimate === null || two.estimate === null || two.se === null || !(two.se > 0))
    return { name: two.name, oneStage: one?.estimate ?? null, oneStageSe: one?.se ?? null, twoStage: two.estimate, twoStageSe: two.se, differenceInSe: null, agree: null };
  const d = (one.estimate - two.estimate) / two.se;
  const agree = Math.abs(d) <= 0.5;
  if (!agree)
    warnings.push(`contrast "${two.name}": one-stage ${fmt(one.estimate)} and two-stage ${fmt(two.estimate)} differ by ${Math.abs(d).toFixed(2)} standard errors; ${USUAL_REASONS}`);
  return { name: two.name, oneStage: one.estimate, oneStageSe: one.se, twoStage: two.estimate, twoStageSe: two.se, differenceInSe: d, agree };
}

function fmt(v: number): string {
  return Number(v.toPrecision(4)).toString();
}
