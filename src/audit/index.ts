export { runAudit, DEFAULT_SETTINGS, MAX_AUDIT_CLAIMS, MAX_SETS_PER_PAIR, type AuditOptions } from "./runAudit.js";
export { runAuditOnSummary, summaryUntestableReason, type SummaryAuditInput } from "./runAudit.js";
export type { AuditResult, AuditSettings, Claim, GlobalTest, TestedClaim, TestName, TestOutcome, UntestableClaim, VariableSummary, Verdict } from "./types.js";
export type { ClaimTypes, MethodResult, TestContext, TestMethod } from "./TestMethod.js";
export { METHODS, chooseMethod } from "./methods/index.js";
export { repairArrows, repairTimeNote, isAncestor } from "./repairArrows.js";
export { compareClaims } from "./rankClaims.js";
