/**
 * Escaping of data-derived text for HTML and SVG (XML) output.
 *
 * Every variable name, level, file name, command line and message that reaches an HTML or SVG
 * document passes through `escapeXml`, in element text and in attribute values alike. The five
 * XML-significant characters are replaced by entities that are valid in both XML and HTML
 * (`&#39;` rather than `&apos;`, which HTML 4 lacks). Control characters that XML 1.0 forbids
 * are replaced by U+FFFD so a standalone SVG file stays well-formed.
 */

const ENTITIES: Readonly<Record<string, string>> = {
  "&": "&amp;",
  "<": "&lt;",
  ">": "&gt;",
  '"': "&quot;",
  "'": "&#39;",
};

/**
 * Escape text for use in XML/HTML element content or a quoted attribute value.
 * Cost: O(length).
 * Source: W3C XML 1.0 (Fifth Edition), §2.4 "Character Data and Markup" and §2.2 "Characters".
 *
 * @param text any string (non-strings are converted with `String`)
 * @returns the text with `& < > " '` replaced by entities and XML-forbidden control characters by U+FFFD
 * @example escapeXml('<b a="1">') // "&lt;b a=&quot;1&quot;&gt;"
 */
export function escapeXml(text: unknown): string {
  return String(text)
    .replace(/[&<>"']/g, (c) => ENTITIES[c] ?? c)
    .replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, "\ufffd");
}
