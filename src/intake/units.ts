// The one table of unit conversions. Values are stored in canonical units (kg/ha, t/ha, %)
// and converted on the way in; every constant names where it comes from.

/** 1 lb = 0.45359237 kg exactly: International Yard and Pound Agreement (1959), as listed in NIST SP 811 (2008), Appendix B. */
export const KG_PER_LB = 0.45359237;
/**
 * 1 international acre = 4046.8564224 m^2 = 0.40468564224 ha exactly (43 560 ft^2 with the
 * international foot of 0.3048 m; same agreement and NIST SP 811, Appendix B).
 */
export const HA_PER_ACRE = 0.40468564224;

/** Standard test weight of a bushel, lb per bushel, by crop. */
export interface BushelWeight {
  readonly crop: string;
  readonly aliases: readonly string[];
  readonly lbPerBushel: number;
  readonly source: string;
}

const USDA_697 = 'USDA, Weights, Measures, and Conversion Factors for Agricultural Commodities and Their Products, Agricultural Handbook No. 697 (1992), standard bushel weights (values recalled from memory)';

export const BUSHEL_WEIGHTS: readonly BushelWeight[] = [
  { crop: 'wheat', aliases: ['wheat'], lbPerBushel: 60, source: USDA_697 },
  { crop: 'soybean', aliases: ['soybean', 'soybeans', 'soya', 'soy'], lbPerBushel: 60, source: USDA_697 },
  { crop: 'maize', aliases: ['maize', 'corn', 'shelled corn'], lbPerBushel: 56, source: USDA_697 },
  { crop: 'sorghum', aliases: ['sorghum', 'grain sorghum', 'milo'], lbPerBushel: 56, source: USDA_697 },
  { crop: 'rye', aliases: ['rye'], lbPerBushel: 56, source: USDA_697 },
  { crop: 'barley', aliases: ['barley'], lbPerBushel: 48, source: USDA_697 },
  { crop: 'oats', aliases: ['oats', 'oat'], lbPerBushel: 32, source: USDA_697 },
];

export function bushelWeightOf(crop: string): BushelWeight | undefined {
  const key = crop.trim().toLowerCase();
  return BUSHEL_WEIGHTS.find((b) => b.aliases.includes(key));
}

export type UnitDimension = 'mass-per-area' | 'fraction' | 'none';

export interface UnitEntry {
  readonly unit: string;
  readonly aliases: readonly string[];
  readonly dimension: UnitDimension;
  /** Unit the value is stored in. */
  readonly canonical: string;
  /** Multiply a value in `unit` by this to get `canonical` (for bu/ac: per lb of bushel weight). */
  readonly factor: number;
  /** True when the factor must be multiplied by the crop's bushel weight in lb. */
  readonly perBushelLb?: boolean;
  readonly source: string;
}

const SI = 'definition of the SI-accepted units tonne (1000 kg) and hectare (10 000 m^2): BIPM SI Brochure, 9th edition (2019), Table 8';
const LB_AC = 'from KG_PER_LB and HA_PER_ACRE (exact definitions above)';

export const UNIT_TABLE: readonly UnitEntry[] = [
  { unit: 'kg/ha', aliases: ['kg/ha', 'kg ha-1', 'kg ha^-1', 'kg per ha'], dimension: 'mass-per-area', canonical: 'kg/ha', factor: 1, source: SI },
  { unit: 't/ha', aliases: ['t/ha', 't ha-1', 't ha^-1', 'tonne/ha', 'tonnes/ha'], dimension: 'mass-per-area', canonical: 't/ha', factor: 1, source: SI },
  { unit: 'dt/ha', aliases: ['dt/ha', 'q/ha', 'dt ha-1'], dimension: 'mass-per-area', canonical: 't/ha', factor: 0.1, source: `${SI}; 1 decitonne (quintal) = 100 kg` },
  { unit: 'g/m2', aliases: ['g/m2', 'g/m^2', 'g m-2'], dimension: 'mass-per-area', canonical: 'kg/ha', factor: 10, source: `${SI}; 1 g/m^2 = 10 000 g/ha = 10 kg/ha` },
  { unit: 'lb/ac', aliases: ['lb/ac', 'lb/acre', 'lbs/ac', 'lbs/acre', 'lb ac-1'], dimension: 'mass-per-area', canonical: 'kg/ha', factor: KG_PER_LB / HA_PER_ACRE, source: LB_AC },
  {
    unit: 'bu/ac',
    aliases: ['bu/ac', 'bu/acre', 'bushel/acre', 'bushels/acre', 'bu ac-1'],
    dimension: 'mass-per-area',
    canonical: 't/ha',
    factor: KG_PER_LB / HA_PER_ACRE / 1000,
    perBushelLb: true,
    source: `${LB_AC} times the crop's standard bushel weight (BUSHEL_WEIGHTS)`,
  },
  { unit: '%', aliases: ['%', 'percent', 'pct'], dimension: 'fraction', canonical: '%', factor: 1, source: 'identity' },
  { unit: 'g/kg', aliases: ['g/kg', 'g kg-1'], dimension: 'fraction', canonical: '%', factor: 0.1, source: '1 g/kg = 1/1000 = 0.1 % (definition of per cent)' },
  { unit: 'fraction', aliases: ['fraction', 'proportion'], dimension: 'fraction', canonical: '%', factor: 100, source: 'definition of per cent' },
  { unit: 'as-is', aliases: ['as-is', 'as is', 'none', ''], dimension: 'none', canonical: 'as-is', factor: 1, source: 'no conversion: values are stored exactly as read' },
];

export function findUnit(unit: string): UnitEntry | undefined {
  const key = unit.trim().toLowerCase().replace(/\s+/g, ' ');
  return UNIT_TABLE.find((u) => u.aliases.includes(key));
}

export interface Conversion {
  readonly from: string;
  readonly to: string;
  readonly factor: number;
}

export class UnitError extends Error {}

/** How to convert values in `unit` to its canonical unit. `crop` is needed for bu/ac. */
export function toCanonical(unit: string, crop?: string): Conversion {
  const entry = findUnit(unit);
  if (entry === undefined) {
    throw new UnitError(`unknown unit "${unit}"; known units: ${UNIT_TABLE.map((u) => u.unit).join(', ')}`);
  }
  return { from: entry.unit, to: entry.canonical, factor: entry.factor * bushelPart(entry, crop) };
}

function bushelPart(entry: UnitEntry, crop: string | undefined): number {
  if (entry.perBushelLb !== true) return 1;
  if (crop === undefined) throw new UnitError(`unit "${entry.unit}" needs the crop (mapping key "crop") to know the bushel weight`);
  const weight = bushelWeightOf(crop);
  if (weight === undefined) {
    throw new UnitError(`no standard bushel weight for crop "${crop}"; known crops: ${BUSHEL_WEIGHTS.map((b) => b.crop).join(', ')}`);
  }
  return weight.lbPerBushel;
}

/** Factor converting values in `from` to `to` (same dimension), e.g. ('%', 'g/kg') -> 10. */
export function conversionFactor(from: string, to: string, crop?: string): number {
  const a = findUnit(from);
  const b = findUnit(to);
  if (a === undefined || b === undefined) throw new UnitError(`unknown unit "${a === undefined ? from : to}"`);
  if (a.dimension !== b.dimension) throw new UnitError(`cannot convert "${from}" to "${to}": different kinds of quantity`);
  if (a.dimension === 'none') return 1;
  // Bring both to the dimension's base (kg/ha or %).
  const base = (e: UnitEntry): number => e.factor * bushelPart(e, crop) * (e.canonical === 't/ha' ? 1000 : 1);
  return base(a) / base(b);
}
