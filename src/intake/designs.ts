// Design names as users write them in a design column -> the engine's TrialDesign.
import type { TrialDesign } from '../engine/types.js';

const NAMES: Record<string, TrialDesign> = {
  'completely-randomised': 'completely-randomised',
  'completely-randomized': 'completely-randomised',
  crd: 'completely-randomised',
  cr: 'completely-randomised',
  'randomised-blocks': 'randomised-blocks',
  'randomized-blocks': 'randomised-blocks',
  'randomised-complete-blocks': 'randomised-blocks',
  'randomized-complete-blocks': 'randomised-blocks',
  rcbd: 'randomised-blocks',
  rcb: 'randomised-blocks',
  blocks: 'randomised-blocks',
  'latin-square': 'latin-square',
  latin: 'latin-square',
  ls: 'latin-square',
  'row-column': 'row-column',
  rowcol: 'row-column',
  rc: 'row-column',
};

/** The design a cell names, or undefined when it names none we know. */
export function parseDesignName(text: string): TrialDesign | undefined {
  const key = text.trim().toLowerCase().replace(/[\s_]+/g, '-');
  return NAMES[key];
}

export const DESIGN_NAMES: readonly TrialDesign[] = ['completely-randomised', 'randomised-blocks', 'latin-square', 'row-column'];
