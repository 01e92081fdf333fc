/**
 * What a report needs besides the audit result: how it was produced. The CLI fills this in
 * (hashes, date, command line); the library never reads the clock, the environment or files.
 */
export interface ReportContext {
  /** The exact command line that produced the result, as typed (quoted where needed). */
  command: string;
  /** Date and time of the run, ISO 8601 (e.g. "2025-03-01T14:05:00Z"), passed in by the caller. */
  date: string;
  /** Input files with their SHA-256 digests (hex), computed by the caller. */
  inputs: { path: string; sha256: string }[];
  /** Version of arrowaudit that produced the report. */
  toolVersion: string;
  /** When true the report says plainly that the data are invented demonstration data. */
  demo?: boolean;
  /**
   * For a run whose command line hides settings (the demo applies missing codes and a level
   * order of its own): the equivalent `arrowaudit test` command with every setting spelled out.
   */
  equivalentCommand?: string;
}
