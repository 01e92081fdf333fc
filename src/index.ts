/** arrowaudit as a library: every folder's public API. */
export * from "./errors.js";
export * from "./graph/index.js";
export * from "./data/index.js";
export * from "./stats/index.js";
export * from "./audit/index.js";
export * from "./report/index.js";
export { renderTestText, renderClaimsText, middleEllipsis } from "./report/terminal.js";
export { renderCsv, csvCell } from "./report/csv.js";
