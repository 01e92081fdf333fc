/**
 * Reading a published correlation or covariance matrix, and the standard deviations beside it.
 *
 * Terms. A *matrix file* is delimited text (comma, semicolon or tab) whose first record is a
 * header: a corner cell (any text or empty), then the variable names; each further record is a
 * variable's name and its row of the matrix, in the header's order. It is *square* when every
 * cell is filled, *lower-triangular* when every cell above the diagonal is empty (or the record
 * ends at the diagonal, as papers print them). A cell's *rounding* is half a unit in its last
 * printed digit (0.005 for "0.31", 0.5 for "120", 5e-18 for "0.31000000000000000"): the printed
 * value lies within it of the value the authors computed (round to nearest, common practice).
 * Positions are 1-based lines of the file and fields of the record.
 */
import Papa from "papaparse";
import { InputError } from "../errors.js";
import { parseNumberText } from "./parseNumberText.js";

export type SummaryKind = "correlations" | "covariance";

export interface SummaryMatrix {
  /** The file name for messages. */
  file: string;
  kind: SummaryKind;
  /** Variable names in header order. */
  names: string[];
  /** The matrix, m × m row-major, as printed (the upper triangle mirrored from the lower one when it was empty). */
  values: Float64Array;
  /** Half a unit in the last printed digit of each cell (mirrored like `values`). */
  rounding: Float64Array;
  layout: "square" | "lower-triangular";
  /** Line of each variable's record (1-based), and the field of each variable's column (1-based), for messages. */
  lineOf: number[];
  fieldOf: number[];
}

/**
 * Half a unit in the last printed digit of a number cell (see the module comment).
 * Cost: O(length).
 * @example printedRounding("0.31") // 0.005
 */
export function printedRounding(text: string): number {
  const m = /^[+-]?(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/.exec(text.trim());
  if (!m) return 0;
  const decimals = m[2]?.length ?? 0;
  const exponent = m[3] !== undefined ? Number(m[3]) : 0;
  return 0.5 * 10 ** (exponent - decimals);
}

interface Record_ {
  fields: string[];
  line: number;
}

/** Records of delimited text with their first line (a quoted field may span lines). */
function records(text: string, file: string, delimiter?: string): Record_[] {
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ""), { delimiter: delimiter ?? "", delimitersToGuess: [",", ";", "\t"], skipEmptyLines: false });
  const quoteError = parsed.errors.find((e) => e.type === "Quotes");
  const out: Record_[] = [];
  let line = 1;
  for (const fields of parsed.data) {
    out.push({ fields, line });
    for (const f of fields) line += (f.match(/\r\n|\r|\n/g) ?? []).length;
    line++;
  }
  if (quoteError) throw new InputError(`${file}:${(quoteError.row ?? 0) + 1}: a quoted field is not closed; close the quote or remove it`, { file, line: (quoteError.row ?? 0) + 1 });
  while (out.length > 0 && out[out.length - 1]!.fields.every((f) => f.trim() === "")) out.pop();
  return out;
}

const quote = (s: string) => JSON.stringify(s);

/**
 * Parse a correlation or covariance matrix file (see the module comment). Checks the layout,
 * the names and that every cell that should hold a number does; the statistics (symmetry,
 * diagonal, definiteness) are checked by `checkSummaryMatrix`.
 * Cost: O(m²) for m variables.
 * @throws InputError naming the file, line, field, the cell's row and column variables and what
 *   to do: no header or no rows, an empty or repeated name, a record whose name differs from the
 *   header's, a missing record, an extra cell, a non-numeric cell, a gap in the lower triangle or
 *   an upper triangle that is only partly filled
 * @example parseSummaryMatrix(",a,b\na,1\nb,0.3,1\n", { file: "r.csv", kind: "correlations" }).layout // "lower-triangular"
 */
export function parseSummaryMatrix(text: string, options: { file: string; kind: SummaryKind; delimiter?: string }): SummaryMatrix {
  const { file, kind } = options;
  const what = kind === "correlations" ? "correlation" : "covariance";
  const recs = records(text, file, options.delimiter);
  if (recs.length === 0) throw new InputError(`${file}: the ${what} matrix file is empty; write the variable names as the header and one row per variable`, { file });
  const header = recs[0]!;
  const headerFields = [...header.fields];
  while (headerFields.length > 1 && headerFields[headerFields.length - 1]!.trim() === "") headerFields.pop();
  const names = headerFields.slice(1).map((s) => s.trim());
  if (names.length === 0) throw new InputError(`${file}:1: the header names no variables; write a corner cell, then the variable names (",age,sbp,bmi")`, { file, line: 1 });
  const seen = new Map<string, number>();
  names.forEach((n, j) => {
    if (n === "") throw new InputError(`${file}:1:${j + 2}: the header's column ${j + 2} has no variable name; name every column`, { file, line: 1, column: j + 2 });
    const before = seen.get(n.normalize("NFC"));
    if (before !== undefined) throw new InputError(`${file}:1:${j + 2}: the variable ${quote(n)} appears twice in the header (columns ${before + 2} and ${j + 2}); each variable needs one column`, { file, line: 1, column: j + 2 });
    seen.set(n.normalize("NFC"), j);
  });
  const m = names.length;
  const rows = recs.slice(1);
  if (rows.length < m) {
    const line = rows.length > 0 ? rows[rows.length - 1]!.line + 1 : header.line + 1;
    throw new InputError(`${file}:${line}: the matrix has ${rows.length} row${rows.length === 1 ? "" : "s"} for ${m} variables; the row of ${quote(names[rows.length]!)} is missing (one row per header variable, in the header's order)`, { file, line });
  }
  if (rows.length > m) {
    const extra = rows[m]!;
    throw new InputError(`${file}:${extra.line}: the matrix has more rows than the ${m} variables of its header; remove the extra rows or add their variables to the header`, { file, line: extra.line });
  }
  const values = new Float64Array(m * m).fill(NaN);
  const rounding = new Float64Array(m * m);
  const filled = new Uint8Array(m * m);
  const cellText: string[] = new Array(m * m).fill("");
  rows.forEach((rec, i) => {
    const rowName = (rec.fields[0] ?? "").trim();
    if (rowName.normalize("NFC") !== names[i]!.normalize("NFC")) {
      throw new InputError(
        `${file}:${rec.line}:1: row ${i + 1} is named ${quote(rowName)} but column ${i + 1} of the header is ${quote(names[i]!)}; list the rows in the header's order, each starting with its variable's name`,
        { file, line: rec.line, column: 1 },
      );
    }
    for (let f = m + 1; f < rec.fields.length; f++) {
      if (rec.fields[f]!.trim() !== "") {
        throw new InputError(`${file}:${rec.line}:${f + 1}: row ${quote(names[i]!)} has a value in field ${f + 1}, beyond the ${m} columns of the header; remove it or add its variable to the header`, { file, line: rec.line, column: f + 1 });
      }
    }
    for (let j = 0; j < m; j++) {
      const raw = (rec.fields[j + 1] ?? "").trim();
      if (raw === "") continue;
      const v = parseNumberText(raw, false);
      if (v === undefined) {
        throw new InputError(
          `${file}:${rec.line}:${j + 2}: the cell of row ${quote(names[i]!)}, column ${quote(names[j]!)} holds ${quote(raw)}, not a number; write a plain number (digits, a decimal point, an optional sign and exponent; no footnote marks or stars)`,
          { file, line: rec.line, column: j + 2 },
        );
      }
      values[i * m + j] = v;
      rounding[i * m + j] = printedRounding(raw);
      filled[i * m + j] = 1;
      cellText[i * m + j] = raw;
    }
  });
  let upperFilled = 0;
  for (let i = 0; i < m; i++) for (let j = i + 1; j < m; j++) upperFilled += filled[i * m + j]!;
  const upperCells = (m * (m - 1)) / 2;
  const at = (i: number, j: number) => ({ file, line: rows[i]!.line, column: j + 2 });
  const cellName = (i: number, j: number) => `the cell of row ${quote(names[i]!)}, column ${quote(names[j]!)}`;
  let lowerFilled = 0;
  for (let i = 0; i < m; i++) for (let j = 0; j < i; j++) lowerFilled += filled[i * m + j]!;
  if (m > 1 && lowerFilled === 0 && upperFilled === upperCells) {
    const p = at(1, 0);
    throw new InputError(
      `${file}:${p.line}:${p.column}: the matrix is upper-triangular (every cell below the diagonal is empty); write it lower-triangular (each row up to its diagonal cell) or fill the whole matrix`,
      p,
    );
  }
  for (let i = 0; i < m; i++) {
    for (let j = 0; j <= i; j++) {
      if (!filled[i * m + j]) {
        const p = at(i, j);
        throw new InputError(
          `${file}:${p.line}:${p.column}: ${cellName(i, j)} is empty, a gap in the ${j === i ? "diagonal" : "lower triangle"}; fill every cell on and below the diagonal (a lower-triangular matrix may leave the cells above it empty)`,
          p,
        );
      }
    }
  }
  if (upperFilled > 0 && upperFilled < upperCells) {
    for (let i = 0; i < m; i++) {
      for (let j = i + 1; j < m; j++) {
        if (!filled[i * m + j]) {
          const p = at(i, j);
          throw new InputError(
            `${file}:${p.line}:${p.column}: ${cellName(i, j)} is empty while other cells above the diagonal are filled; fill the whole matrix, or leave every cell above the diagonal empty (lower-triangular)`,
            p,
          );
        }
      }
    }
  }
  const layout = upperFilled === 0 && m > 1 ? "lower-triangular" : "square";
  if (layout === "lower-triangular") {
    for (let i = 0; i < m; i++) {
      for (let j = i + 1; j < m; j++) {
        values[i * m + j] = values[j * m + i]!;
        rounding[i * m + j] = rounding[j * m + i]!;
      }
    }
  }
  return { file, kind, names, values, rounding, layout, lineOf: rows.map((r) => r.line), fieldOf: names.map((_, j) => j + 2) };
}

export interface StandardDeviations {
  file: string;
  /** Standard deviation by variable name (NFC). */
  byName: Map<string, number>;
  /** Where each name was written (1-based line and field), for messages. */
  where: Map<string, { line: number; column: number }>;
}

/**
 * Parse a file of standard deviations: either *wide* (a header of names and one record of
 * numbers) or *long* (one record per variable: its name and its standard deviation, with an
 * optional header record whose second field is not a number). A file of exactly two records whose
 * second holds only numbers and whose first holds none is wide. Cost: O(m).
 * @throws InputError naming the file, line and field: a non-numeric, non-positive or repeated
 *   entry, a record with another number of fields, an empty file
 * @example parseStandardDeviations("variable,sd\nage,12.1\nsbp,15\n", { file: "sd.csv" }).byName.get("sbp") // 15
 */
export function parseStandardDeviations(text: string, options: { file: string; delimiter?: string }): StandardDeviations {
  const { file } = options;
  const recs = records(text, file, options.delimiter).map((r) => ({ ...r, fields: trimTrailing(r.fields.map((f) => f.trim())) }));
  if (recs.length === 0) throw new InputError(`${file}: the standard deviations file is empty; write one line per variable (name, standard deviation), or the names as a header and the values below`, { file });
  const isNum = (s: string) => parseNumberText(s, false) !== undefined;
  const wide = recs.length === 2 && recs[1]!.fields.length > 0 && recs[1]!.fields.every(isNum) && !recs[0]!.fields.some(isNum);
  const entries: { name: string; text: string; nameAt: { line: number; column: number }; valueAt: { line: number; column: number } }[] = [];
  if (wide) {
    const [h, v] = recs as [Record_, Record_];
    if (h.fields.length !== v.fields.length) {
      throw new InputError(`${file}:${v.line}: ${v.fields.length} values for ${h.fields.length} names; give one standard deviation under each name`, { file, line: v.line });
    }
    h.fields.forEach((name, j) => entries.push({ name, text: v.fields[j]!, nameAt: { line: h.line, column: j + 1 }, valueAt: { line: v.line, column: j + 1 } }));
  } else {
    recs.forEach((r, k) => {
      if (k === 0 && r.fields.length === 2 && !isNum(r.fields[1]!)) return; // a header such as "variable,sd"
      if (r.fields.length !== 2) {
        throw new InputError(`${file}:${r.line}: a line of the standard deviations holds ${r.fields.length} field${r.fields.length === 1 ? "" : "s"}; write the variable's name and its standard deviation`, { file, line: r.line });
      }
      entries.push({ name: r.fields[0]!, text: r.fields[1]!, nameAt: { line: r.line, column: 1 }, valueAt: { line: r.line, column: 2 } });
    });
  }
  const byName = new Map<string, number>();
  const where = new Map<string, { line: number; column: number }>();
  for (const e of entries) {
    const key = e.name.normalize("NFC");
    if (e.name === "") throw new InputError(`${file}:${e.nameAt.line}:${e.nameAt.column}: a standard deviation has no variable name; name it as in the matrix`, { file, ...e.nameAt });
    if (byName.has(key)) throw new InputError(`${file}:${e.nameAt.line}:${e.nameAt.column}: ${quote(e.name)} has a second standard deviation; keep one`, { file, ...e.nameAt });
    const v = parseNumberText(e.text, false);
    if (v === undefined || !(v > 0)) {
      throw new InputError(`${file}:${e.valueAt.line}:${e.valueAt.column}: the standard deviation of ${quote(e.name)} is ${quote(e.text)}; write a positive number`, { file, ...e.valueAt });
    }
    byName.set(key, v);
    where.set(key, e.nameAt);
  }
  return { file, byName, where };
}

function trimTrailing(fields: string[]): string[] {
  const out = [...fields];
  while (out.length > 0 && out[out.length - 1] === "") out.pop();
  return out;
}
