/**
 * One warning per repeated declaration, however often it is repeated. A graph file that lists
 * the same arrow 2,000 times (a generated file, a copy-paste slip) would otherwise print 1,999
 * identical warnings and bury everything else on the screen.
 *
 * The first repeat of a declaration pushes the usual warning ("… is declared twice (first on line
 * 3); the duplicate is ignored") at its place among the other warnings; later repeats rewrite that
 * same entry into a count with the first few lines.
 */

/** How many repeat lines a collapsed warning names before "and N more". */
const LINES_SHOWN = 5;

interface Repeat {
  index: number;
  where: string;
  what: (times: string) => string;
  first: number;
  /** Distinct lines of the repeats, in file order. */
  lines: number[];
  /** Number of repeats (a line may repeat a declaration more than once: `a -> b, b, b`). */
  count: number;
}

export interface DuplicateWarnings {
  /**
   * Record that `what` (the sentence for a count: `(n) => \`arrow a -> b is declared ${n}\``), first declared on line `first`, is declared again
   * on `line`; `where` is the location prefix of the first repeat (file:line). O(1) amortised.
   */
  repeat(key: string, what: (times: string) => string, where: string, first: number, line: number): void;
}

/**
 * A recorder of repeated declarations that writes into `warnings`.
 * @example
 * const w: string[] = []; const d = duplicateWarnings(w);
 * const what = (n: string) => `arrow a -> b is declared ${n}`;
 * d.repeat("a>b", what, "g.txt:2", 1, 2); d.repeat("a>b", what, "g.txt:3", 1, 3);
 * w; // ["g.txt:2: arrow a -> b is declared 3 times (first on line 1, again on lines 2 and 3); the duplicates are ignored"]
 */
export function duplicateWarnings(warnings: string[]): DuplicateWarnings {
  const seen = new Map<string, Repeat>();
  return {
    repeat(key, what, where, first, line) {
      const r = seen.get(key);
      if (r === undefined) {
        seen.set(key, { index: warnings.length, where, what, first, lines: [line], count: 1 });
        warnings.push(`${where}: ${what("twice")} (first on line ${first}); the duplicate is ignored`);
        return;
      }
      r.count++;
      if (r.lines[r.lines.length - 1] !== line) r.lines.push(line);
      warnings[r.index] = collapsed(r);
    },
  };
}

function collapsed(r: Repeat): string {
  const shown = r.lines.slice(0, LINES_SHOWN).map(String);
  const more = r.lines.length - shown.length;
  const list =
    shown.length === 1 ? `line ${shown[0]}` : more > 0 ? `lines ${shown.join(", ")} and ${more.toLocaleString("en-US")} more` : `lines ${shown.slice(0, -1).join(", ")} and ${shown[shown.length - 1]}`;
  return `${r.where}: ${r.what(`${(r.count + 1).toLocaleString("en-US")} times`)} (first on line ${r.first}, again on ${list}); the duplicates are ignored`;
}
