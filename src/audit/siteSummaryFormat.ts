/**
 * The tag and version of the site summary format, in a module of their own so that reading
 * summaries (`readSiteSummary.ts`, also on a helper thread) does not load the code that writes them.
 */

/** The format tag of a site summary file. */
export const SITE_SUMMARY_FORMAT = "arrowaudit-site-summary";
/** The version of the format this code writes and reads. */
export const SITE_SUMMARY_VERSION = 2;
