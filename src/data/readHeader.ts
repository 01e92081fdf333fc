import Papa from "papaparse";
import { DataError } from "../errors.js";

/**
 * The column names of a delimited text file from its first line(s), without reading the rows.
 * The delimiter is detected among comma, semicolon and tab unless given; a UTF-8 BOM is removed;
 * quoted names may contain delimiters. Cost: O(length of the header).
 * @throws DataError when there is no header line or a column name is empty or duplicated.
 * @example readHeader('age,"systolic bp",sex\n61,130,f') // ["age", "systolic bp", "sex"]
 */
export function readHeader(text: string, options: { file?: string; delimiter?: string } = {}): string[] {
  const file = options.file ?? "data";
  const body = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  if (body.trim() === "") throw new DataError(`${file}: the file is empty; a header row with the column names is required`, { file, line: 1 });
  const parsed = Papa.parse<string[]>(body, { preview: 1, delimiter: options.delimiter ?? "", delimitersToGuess: [",", ";", "\t"] });
  const names = (parsed.data[0] ?? []).map((s) => s.trim());
  const seen = new Set<string>();
  names.forEach((n, i) => {
    if (n === "") throw new DataError(`${file}:1: column ${i + 1} has an empty name; give every column a name in the header row`, { file, line: 1, column: i + 1 });
    if (seen.has(n)) throw new DataError(`${file}:1: column name "${n}" appears twice; make the names unique`, { file, line: 1, column: i + 1 });
    seen.add(n);
  });
  return names;
}
