export type { Column, Table, VariableType } from "./Table.js";
export { CATEGORICAL_TYPES } from "./Table.js";
export type { DesignColumn, Moments, PatternMoments } from "./Moments.js";
export { readTable } from "./readTable.js";
export { decodeHead, readHeader } from "./readHeader.js";
export { createTable, type CellValue, type CreateTableOptions } from "./createTable.js";
export {
  DEFAULT_MISSING_CODES,
  parseLevelDeclarations,
  parseMissingCodes,
  parseMissingSpec,
  parseNameList,
  parseTypeDeclarations,
  splitOptionList,
  type MissingSpec,
  type ReadOptions,
} from "./readOptions.js";
export { inferType } from "./inferType.js";
export { buildPatternMoments, type PatternMomentsOptions } from "./buildPatternMoments.js";
export { midRanks, rankColumns } from "./rankColumns.js";
export { findHighCardinalityColumns, highCardinality, HIGH_CARDINALITY_MIN_LEVELS } from "./findHighCardinalityColumns.js";
export { findSentinelCodes, SENTINEL_VALUES, type SentinelFinding } from "./findSentinelCodes.js";
export { findNonTextByte } from "./textBytes.js";
export { parseSummaryMatrix, parseStandardDeviations, printedRounding, type SummaryMatrix, type SummaryKind, type StandardDeviations } from "./parseSummaryMatrix.js";
export { checkSummaryMatrix, MATRIX_SLACK, type CheckedMatrix } from "./checkSummaryMatrix.js";
export { createSummaryData, type SummaryData, type SummarySource } from "./summaryData.js";
export { countsTable, expandCounts, readCounts, MAX_EXPANDED_CELLS, type CountsOptions } from "./expandCounts.js";
