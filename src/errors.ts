/**
 * The error hierarchy of arrowaudit. Every error a user can cause is one of these;
 * the CLI maps `ArrowauditError` subclasses to exit code 2 (invalid input) and
 * `UsageError` to exit code 1. Messages start lower case and have no final period.
 */

/** Where in an input file something is (1-based line and column). */
export interface SourcePosition {
  file?: string;
  line?: number;
  column?: number;
}

export class ArrowauditError extends Error {
  override name = "ArrowauditError";
}

/** The command line itself is wrong (unknown option value, missing argument). Exit code 1. */
export class UsageError extends ArrowauditError {
  override name = "UsageError";
}

/** Bad input at a known place in a file: syntax errors and the like. Exit code 2. */
export class InputError extends ArrowauditError {
  override name = "InputError";
  readonly file?: string;
  readonly line?: number;
  readonly column?: number;
  constructor(message: string, pos: SourcePosition = {}) {
    super(message);
    this.file = pos.file;
    this.line = pos.line;
    this.column = pos.column;
  }
}

/** The graph is well formed text but not a valid causal DAG. Exit code 2. */
export class GraphError extends InputError {
  override name = "GraphError";
}

/** The graph has a directed cycle; `cycle` lists it with the first node repeated at the end. */
export class CycleError extends GraphError {
  override name = "CycleError";
  constructor(readonly cycle: readonly string[], pos: SourcePosition = {}) {
    super(
      `${pos.file ? pos.file + ": " : ""}cycle: ${cycle.join(" -> ")}; a variable cannot precede itself in time, so remove or reverse one of these arrows`,
      pos,
    );
  }
}

/** A name is used that the graph (or the data) does not have. */
export class UnknownNodeError extends GraphError {
  override name = "UnknownNodeError";
  constructor(message: string, readonly names: readonly string[], pos: SourcePosition = {}) {
    super(message, pos);
  }
}

/** The data file is unreadable or inconsistent (ragged rows, stray text in numbers...). Exit code 2. */
export class DataError extends InputError {
  override name = "DataError";
}

/** Too little data for a computation; usually becomes an `untestable` finding, not a crash. */
export class InsufficientDataError extends ArrowauditError {
  override name = "InsufficientDataError";
}
