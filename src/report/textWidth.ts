/**
 * Approximate rendered width of a label, used to size graph nodes and plot margins without a
 * browser. Widths are average advance widths of common sans-serif system fonts, in ems, per
 * character class (from memory of typical metrics of Helvetica/Arial-like faces; deliberately
 * slightly generous so labels never overflow their boxes).
 */

/**
 * Estimate the width in pixels of `text` set in a sans-serif font of `fontSize` pixels.
 * Wide (East Asian, emoji) characters count as one em; narrow punctuation as about a quarter.
 * Cost: O(length).
 *
 * @param text the label
 * @param fontSize font size in pixels
 * @example estimateTextWidth("sbp", 13) // about 22
 */
export function estimateTextWidth(text: string, fontSize: number): number {
  let ems = 0;
  for (const ch of text) {
    const cp = ch.codePointAt(0) ?? 0;
    if (cp >= 0x1100 && (cp <= 0x115f || (cp >= 0x2e80 && cp <= 0xa4cf) || (cp >= 0xac00 && cp <= 0xd7a3) || (cp >= 0xf900 && cp <= 0xfaff) || (cp >= 0xfe30 && cp <= 0xfe4f) || (cp >= 0xff00 && cp <= 0xff60) || cp >= 0x1f300)) {
      ems += 1.0;
    } else if ("il.,:;|!'`ıj".includes(ch)) {
      ems += 0.3;
    } else if ("ftrI()[]{} -".includes(ch)) {
      ems += 0.38;
    } else if ("mwMW@%".includes(ch)) {
      ems += 0.9;
    } else if (ch >= "A" && ch <= "Z") {
      ems += 0.7;
    } else if (ch >= "0" && ch <= "9") {
      ems += 0.64;
    } else {
      ems += 0.61;
    }
  }
  return ems * fontSize;
}
