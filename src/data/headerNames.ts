/**
 * The column names of a header row, checked.
 *
 * Terms: two names are *the same* when they are equal after Unicode normalisation to NFC
 * (Unicode Standard Annex #15, "Unicode Normalization Forms"): `âge` typed as one code point
 * (U+00E2, NFC) and as `a` + U+0302 (NFD) look identical and name one column. A *row-label
 * column* is an unnamed first column (an empty first header cell) in a file of more than one
 * column, as R's `write.csv` writes by default: its cells label the rows and are not data.
 */
import { DataError } from "../errors.js";

export interface HeaderNames {
  /** Trimmed names of every header field, in file order (the row-label column's is ""). */
  fields: string[];
  /** Whether field 1 is a row-label column (left out of the table, with a note). */
  rowLabels: boolean;
}

/**
 * Check the trimmed names of a header: no empty name (except a row-label column first), no name
 * twice, also not in two Unicode forms. Cost: O(total length of the names).
 * @throws DataError naming the file, line 1 and the columns: an empty name, or a repeated name
 *   (with how often it appears)
 * @example checkHeaderNames(["", "age", "sbp"], "r.csv").rowLabels // true
 */
export function checkHeaderNames(fields: readonly string[], file: string | undefined): HeaderNames {
  const where = `${file ?? "data"}:1: `;
  const rowLabels = fields.length > 1 && fields[0] === "";
  const first = new Map<string, number>(); // NFC name → first field index
  const repeats = new Map<string, number[]>(); // NFC name → every field index, when repeated
  fields.forEach((name, i) => {
    if (name === "" && !(i === 0 && rowLabels)) {
      throw new DataError(`${where}column ${i + 1} has no name; name every column in the header line`, { file, line: 1, column: i + 1 });
    }
    if (name === "") return;
    const key = name.normalize("NFC");
    const prev = first.get(key);
    if (prev === undefined) first.set(key, i);
    else (repeats.get(key) ?? repeats.set(key, [prev]).get(key)!).push(i);
  });
  for (const [, at] of repeats) {
    const [a, b] = [at[0]!, at[1]!];
    const column = { file, line: 1, column: b + 1 };
    if (fields[a] !== fields[b]) {
      throw new DataError(
        `${where}columns ${a + 1} and ${b + 1} are both named "${fields[a]}", written in two Unicode forms (${unicodeForm(fields[a]!)} and ${unicodeForm(fields[b]!)}) that look alike and would match the same graph node; rename one of them`,
        column,
      );
    }
    const count = at.length === 2 ? "twice" : `${at.length} times`;
    const shown = at.length === 2 ? `columns ${a + 1} and ${b + 1}` : `columns ${at.slice(0, 5).map((i) => i + 1).join(", ")}${at.length > 5 ? ", ..." : ""}`;
    throw new DataError(`${where}column name "${fields[a]}" appears ${count} (${shown}); make the names unique`, column);
  }
  return { fields: [...fields], rowLabels };
}

/** "NFC", "NFD" or "another form", for messages. */
function unicodeForm(s: string): string {
  if (s === s.normalize("NFC")) return "NFC";
  if (s === s.normalize("NFD")) return "NFD";
  return "another form";
}
