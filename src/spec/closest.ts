// "Did you mean": the allowed value nearest to what was typed, so a misspelling is answered with
// the fix. Case is ignored; a suggestion is offered only when it is plausibly a typo.

/** Edit distance (insertions, deletions, substitutions) between two strings. */
export function editDistance(a: string, b: string): number {
  const prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let diagonal = prev[0];
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const above = prev[j];
      prev[j] = Math.min(prev[j] + 1, prev[j - 1] + 1, diagonal + (a[i - 1] === b[j - 1] ? 0 : 1));
      diagonal = above;
    }
  }
  return prev[b.length];
}

/** The allowed value closest to `typed` (case-insensitive), or null when none is close enough. */
export function closest(typed: string, allowed: readonly string[]): string | null {
  const t = typed.trim().toLowerCase();
  let best: string | null = null;
  let bestDistance = Infinity;
  for (const option of allowed) {
    const o = option.toLowerCase();
    const d = o === t ? 0 : o.startsWith(t) || t.startsWith(o) ? 1 : editDistance(t, o);
    if (d < bestDistance) {
      best = option;
      bestDistance = d;
    }
  }
  // A third of the longer name, at least 2: "rainfal" -> "rainfall", not "pH" -> "yield".
  const limit = best === null ? 0 : Math.max(2, Math.ceil(Math.max(t.length, best.length) / 3));
  return best !== null && bestDistance <= limit ? best : null;
}

/** `"a", "b", "c"` — at most `max` names, then "and N more". */
export function listNames(names: readonly string[], max = 30): string {
  const shown = names.slice(0, max).map((n) => `"${n}"`);
  return names.length > max ? `${shown.join(', ')} and ${names.length - max} more` : shown.join(', ');
}

/** "; did you mean "x"?" or "" — to append to a message that already lists the allowed values. */
export function didYouMean(typed: string, allowed: readonly string[]): string {
  const c = closest(typed, allowed);
  return c === null || c === typed ? '' : `; did you mean "${c}"?`;
}
