// What intake hands to the store: a validated, unit-converted plot table. Intake reads and
// checks; the store writes. Neither knows the other's internals.
import { z } from '../spec/zod.js';
import { columnsSchema } from '../spec/analysisSpec.js';
import { TEXT_ENCODINGS } from './text.js';
import type { FactorInfo, TreatmentInfo, TrialDesign } from '../engine/types.js';

export const traitMappingSchema = z
  .object({
    name: z.string().min(1),
    unit: z.string().min(1),
    kind: z.enum(['continuous', 'percent', 'count']).optional(),
    lower: z.number().optional(),
    upper: z.number().optional(),
  })
  .strict();

/** The mapping file: which column is what, plus units and options of the reader. */
export const importMappingSchema = z
  .object({
    columns: columnsSchema,
    /** One trait (response column) or, with columns.trait, the traits named in that column. */
    trait: traitMappingSchema.optional(),
    traits: z.array(traitMappingSchema).optional(),
    control: z.string().optional(),
    /**
     * The control's level of a numeric factor when its cell is blank, in the factor's file unit:
     * 0 unless given here (null = not applicable, which keeps the control out of trends).
     */
    controlLevels: z.record(z.string(), z.number().finite().nullable()).optional(),
    /** When given, every treatment code in the file must be one of these. */
    treatments: z.array(z.string().min(1)).optional(),
    factorUnits: z.record(z.string(), z.string()).optional(),
    /** Crop, used for bushel conversions (standard test weight). */
    crop: z.string().optional(),
    /** Design for every trial when the file has no design column. */
    design: z.enum(['completely-randomised', 'randomised-blocks', 'latin-square', 'row-column']).optional(),
    delimiter: z.string().length(1).optional(),
    decimalComma: z.boolean().optional(),
    sheet: z.string().optional(),
    protocol: z.string().optional(),
    /** Text encoding of a delimited file when it is not UTF-8 (a byte-order mark is recognised). */
    encoding: z.enum(TEXT_ENCODINGS).optional(),
  })
  .strict();
export type ImportMapping = z.infer<typeof importMappingSchema>;

/** One problem found in a file, precise enough to fix it without guessing. */
export interface IntakeProblem {
  readonly file: string;
  /** 1-based line/row number in the file as a spreadsheet shows it (header is row 1); 0 = whole file. */
  readonly row: number;
  readonly column: string | null;
  readonly value: string | null;
  /** Short machine-readable rule id, e.g. "not-a-number", "out-of-bounds", "duplicate-plot". */
  readonly rule: string;
  readonly message: string;
}

export class IntakeError extends Error {
  constructor(readonly problems: readonly IntakeProblem[], readonly truncated = false) {
    super(formatProblems(problems, truncated));
    this.name = 'IntakeError';
  }
}

export function formatProblems(problems: readonly IntakeProblem[], truncated = false): string {
  const lines = problems.map(
    (p) => `${p.file}${p.row > 0 ? `, row ${p.row}` : ''}${p.column ? `, column "${p.column}"` : ''}${p.value !== null ? `, value "${p.value}"` : ''}: ${p.message} [${p.rule}]`,
  );
  if (truncated) lines.push('... more problems not listed; fix these and import again');
  return lines.join('\n');
}

export interface ParsedTrait {
  readonly name: string;
  /** Canonical unit after conversion (t/ha, kg/ha, %, count ...). */
  readonly unit: string;
  readonly kind: 'continuous' | 'percent' | 'count';
  readonly lower: number | null;
  readonly upper: number | null;
}

export interface ParsedTrial {
  /** Key unique within the file: the trial column value, or site + year. */
  readonly key: string;
  readonly site: string;
  /** 0 when the file gives no year (a trial column without a year column). */
  readonly year: number;
  readonly design: TrialDesign;
  /** Numeric levels applied in this trial that differ from the treatment's first-seen level (canonical units). */
  readonly appliedLevels?: Readonly<Record<string, Readonly<Record<string, number>>>>;
}

export interface ParsedPlot {
  readonly trialKey: string;
  readonly treatment: string;
  readonly block: string | null;
  readonly row: number | null;
  readonly col: number | null;
  /** The plot identifier from columns.plot, when the file has one. */
  readonly plotId?: string | null;
  /** The source row of the plot's first line, for messages. */
  readonly sourceRow: number;
}

export interface ParsedObservation {
  /** Index into ParsedPlotTable.plots. */
  readonly plot: number;
  readonly trait: string;
  /** Canonical unit; null = missing value (a missing plot). */
  readonly value: number | null;
}

export interface ParsedPlotTable {
  readonly file: string;
  readonly sha256: string;
  readonly rowsRead: number;
  readonly protocol: string;
  readonly control: string | null;
  readonly traits: readonly ParsedTrait[];
  readonly factors: readonly FactorInfo[];
  readonly treatments: readonly TreatmentInfo[];
  readonly trials: readonly ParsedTrial[];
  readonly plots: readonly ParsedPlot[];
  readonly observations: readonly ParsedObservation[];
  /** Trial-level covariates read from covariate columns: trialKey -> name -> value. */
  readonly trialCovariates: Readonly<Record<string, Readonly<Record<string, number | string | null>>>>;
  readonly mapping: ImportMapping;
  /** Things the import keeps but the user should look at (implausible values), with row and column. */
  readonly warnings?: readonly IntakeProblem[];
}
