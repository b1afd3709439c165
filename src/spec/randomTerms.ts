// Names of the one-stage model's random terms, in words. A spec written with a formula
// language's interaction notation ("treatment:trial") is refused with the name to write instead.
import { z } from './zod.js';

export const RANDOM_TERM_NAMES = ['trial', 'block', 'treatment-by-trial', 'site', 'year', 'treatment-by-site', 'treatment-by-year'] as const;
export type RandomTermName = (typeof RANDOM_TERM_NAMES)[number];

/** The word form of a colon form, when there is one: "treatment:trial" or "trial:treatment" -> "treatment-by-trial". */
export function wordFormOf(term: string): RandomTermName | null {
  const parts = term.split(':').map((s) => s.trim().toLowerCase());
  if (parts.length !== 2) return null;
  const [a, b] = parts;
  if ((a === 'treatment' && b === 'trial') || (a === 'trial' && b === 'treatment')) return 'treatment-by-trial';
  if ((a === 'treatment' && b === 'site') || (a === 'site' && b === 'treatment')) return 'treatment-by-site';
  if ((a === 'treatment' && b === 'year') || (a === 'year' && b === 'treatment')) return 'treatment-by-year';
  // block within trial is what "block" already means
  if ((a === 'block' && b === 'trial') || (a === 'trial' && b === 'block')) return 'block';
  return null;
}

export function randomTermMessage(input: unknown): string {
  const given = typeof input === 'string' ? input : JSON.stringify(input);
  const allowed = RANDOM_TERM_NAMES.map((t) => `"${t}"`).join(', ');
  if (typeof input === 'string' && input.includes(':')) {
    const word = wordFormOf(input);
    return word
      ? `random term "${given}" is written in a formula notation this spec does not accept; write "${word}"`
      : `random term "${given}" is written in a formula notation this spec does not accept; random terms are named in words: ${allowed}`;
  }
  return `unknown random term "${given}"; random terms are ${allowed}`;
}

export const randomTermSchema = z.enum(RANDOM_TERM_NAMES, { error: (issue) => randomTermMessage(issue.input) });
