/**
 * Nearest-name suggestions for misspelt names ("Tmx" → "Tmax").
 *
 * Distance: optimal string alignment (restricted Damerau–Levenshtein), i.e. insertions,
 * deletions, substitutions and transpositions of adjacent characters each cost 1
 * (Damerau, "A technique for computer detection and correction of spelling errors",
 * CACM 7(3), 1964). A candidate is suggested when its distance is at most
 * max(1, ⌊len/3⌋) and smaller than the longer name's length (so 'm' does not suggest 't')
 * (common practice, no source), ties broken by list order; a case-insensitive match wins.
 */
export function osaDistance(a: string, b: string): number {
  const n = a.length;
  const m = b.length;
  if (n === 0) return m;
  if (m === 0) return n;
  // d[i][j] in a flat (n+1)×(m+1) array
  const w = m + 1;
  const d = new Int32Array((n + 1) * w);
  for (let i = 0; i <= n; i++) d[i * w] = i;
  for (let j = 0; j <= m; j++) d[j] = j;
  for (let i = 1; i <= n; i++) {
    for (let j = 1; j <= m; j++) {
      const cost = a.charCodeAt(i - 1) === b.charCodeAt(j - 1) ? 0 : 1;
      let v = Math.min(d[(i - 1) * w + j] + 1, d[i * w + j - 1] + 1, d[(i - 1) * w + j - 1] + cost);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) {
        v = Math.min(v, d[(i - 2) * w + j - 2] + 1);
      }
      d[i * w + j] = v;
    }
  }
  return d[n * w + m];
}

/** Replaces common Unicode look-alikes (Cyrillic, Greek) by their Latin twins before comparing. */
const LOOKALIKES: Record<string, string> = {
  "а": "a", "е": "e", "о": "o", "р": "p", "с": "c", "у": "y", "х": "x", "к": "k", "м": "m", "т": "t", "н": "h", "в": "b",
  "А": "A", "В": "B", "Е": "E", "К": "K", "М": "M", "Н": "H", "О": "O", "Р": "P", "С": "C", "Т": "T", "Х": "X",
  "α": "a", "ο": "o", "ν": "v", "ρ": "p", "τ": "t", "Α": "A", "Β": "B", "Ε": "E", "Η": "H", "Ι": "I", "Κ": "K",
  "Μ": "M", "Ν": "N", "Ο": "O", "Ρ": "P", "Τ": "T", "Χ": "X",
};

export function foldLookalikes(s: string): string {
  let r = "";
  for (const ch of s) r += Object.hasOwn(LOOKALIKES, ch) ? LOOKALIKES[ch] : ch;
  return r;
}

/** The candidate nearest to `name`, or undefined when nothing is close enough. */
export function nearestName(name: string, candidates: Iterable<string>): string | undefined {
  if (name.length > 200) return undefined; // hostile input: not worth an O(n·m) table
  const folded = foldLookalikes(name);
  const limit = Math.max(1, Math.floor(folded.length / 3));
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    if (c === name) continue;
    if (c.toLowerCase() === folded.toLowerCase()) return c;
    const dist = osaDistance(folded, c);
    if (dist < bestD) {
      bestD = dist;
      best = c;
    }
  }
  // a single-letter name is one edit from every other single letter: require that fewer
  // characters change than the longer of the two names has
  return best !== undefined && bestD <= limit && bestD < Math.max(folded.length, best.length) ? best : undefined;
}
