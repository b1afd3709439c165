// The one sentence every result carries on what the price ratio means in this network's units.
export function unitNote(rateUnit: string | null, yieldUnit: string | null): string {
  const ru = rateUnit ?? "the rate factor's unit";
  const yu = yieldUnit ?? "the trait's unit";
  const example =
    rateUnit === 'kg/ha' && yieldUnit === 't/ha'
      ? ' For example, an input at 1.20 per kg and grain at 200 per t give 1.20 / 200 = 0.006 t per kg (not 1.20 / 0.2, which mixes kg and t).'
      : ' Convert both prices to these units before dividing.';
  return (
    `Rates are in ${ru}; yields, yield gains and net returns are in ${yu}. ` +
    `The price ratio is (input price per unit of ${ru}) / (crop price per unit of ${yu}), i.e. the yield (in ${yu}) that pays for one unit of rate.` +
    example +
    ` Net returns are in yield units so the price level need not be known; multiply by the crop price per unit of ${yu} for money.`
  );
}
