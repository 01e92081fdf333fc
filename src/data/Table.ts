/**
 * A data table read from a cohort file: one typed column per variable.
 *
 * Types: `continuous` (any numbers), `binary` (two distinct values), `ordinal`
 * (ordered levels, scored 0..k-1 unless the levels are numbers), `nominal` (unordered levels).
 */
export type VariableType = "continuous" | "binary" | "ordinal" | "nominal";

export const CATEGORICAL_TYPES: ReadonlySet<VariableType> = new Set(["binary", "ordinal", "nominal"]);

export interface Column {
  readonly name: string;
  readonly type: VariableType;
  /** `inferred` from the values, or `declared` by the user (--types / --levels). */
  readonly typeSource: "inferred" | "declared";
  /**
   * Numeric value per row; NaN marks a missing value. For continuous columns the number read;
   * for binary and ordinal columns the numeric level when the levels are numbers, else the
   * level's index (0..k-1, in `levels` order); for nominal columns the level index (not a score).
   */
  readonly values: Float64Array;
  /** For binary, ordinal and nominal columns: level index per row, -1 when missing. */
  readonly codes?: Int32Array;
  /** For binary, ordinal and nominal columns: level labels in code order (ordinal: low to high). */
  readonly levels?: readonly string[];
  /** Number of missing values. */
  readonly missing: number;
}

export interface Table {
  /** The file name as given by the caller (for messages and reports), if any. */
  readonly file?: string;
  /** Number of data rows (header excluded). */
  readonly rows: number;
  readonly columns: readonly Column[];
  /** Non-fatal findings: inferred types, ID-like text columns, ... (one sentence each). */
  readonly warnings: readonly string[];
  column(name: string): Column | undefined;
}
