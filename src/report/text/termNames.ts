// Random-term names as they are displayed: "treatment-by-trial" reads "treatment × trial".
export function termDisplayName(term: string): string {
  return term.replace(/-by-/g, ' × ');
}
