export { runAudit, DEFAULT_SETTINGS, MAX_AUDIT_CLAIMS, MAX_SETS_PER_PAIR, type AuditOptions } from "./runAudit.js";
export { runAuditOnSummary, summaryUntestableReason, type SummaryAuditInput } from "./runAudit.js";
export { runAuditWithTester, type ClaimTesterInput } from "./runAudit.js";
export { runAuditOnCounts } from "./runAudit.js";
export {
  summarizeSite, SITE_SUMMARY_FORMAT, SITE_SUMMARY_VERSION, DEFAULT_MIN_CELL, LEAST_MIN_CELL,
  type SiteSummary, type SiteSummarySettings, type SiteVariable, type ClaimSummary, type MomentsClaimSummary, type TablesClaimSummary, type UntestableClaimSummary, type SummarizeOptions,
} from "./siteSummary.js";
export { parseSiteSummary, checkSitesAgree, checkPoolAgrees, poolSiteSummaries, poolSitePool, poolMoments, poolTables, type SiteSummaryFile } from "./poolSiteSummaries.js";
export { SitePoolBuilder, poolSites, type SitePool, type SiteInfo, type ClaimPool } from "./sitePool.js";
export type { AuditResult, AuditSettings, Claim, GlobalTest, TestedClaim, TestName, TestOutcome, UntestableClaim, VariableSummary, Verdict } from "./types.js";
export type { ClaimTypes, MethodResult, TestContext, TestMethod } from "./TestMethod.js";
export { METHODS, chooseMethod } from "./methods/index.js";
export { repairArrows, repairTimeNote, isAncestor } from "./repairArrows.js";
export { compareClaims } from "./rankClaims.js";
