/**
 * Markup for the conditional-independence sign "⫫" (U+2AEB) in HTML and SVG.
 *
 * Many system fonts lack U+2AEB and show an empty box; every common font has "⊥" (U+22A5), so the
 * sign is drawn as two up tacks set close together, the usual typographic construction of the
 * symbol (Dawid A.P. 1979, "Conditional independence in statistical theory", Journal of the
 * Royal Statistical Society B 41(1):1–31, introduced the notation). Text copied from the page
 * still reads as two up tacks; the accessible name says "independent of".
 */
import { escapeXml } from "./escapeXml.js";

/**
 * Escape `text` for HTML and draw each "⫫" as two overlapping up tacks in a span of class "ind".
 * Cost: O(length).
 *
 * @example independenceHtml("a ⫫ b | ∅") // 'a <span class="ind" ...>⊥⊥</span> b | ∅'
 */
export function independenceHtml(text: string): string {
  return escapeXml(text)
    .split("⫫")
    .join('<span class="ind" role="img" aria-label="independent of">⊥<span>⊥</span></span>');
}

/**
 * Escape `text` for SVG `<text>` content and draw each "⫫" as two up tacks, the second pulled
 * back by 0.5 em. Cost: O(length).
 *
 * @example independenceSvg("a ⫫ b") // 'a ⊥<tspan dx="-0.5em">⊥</tspan> b'
 */
export function independenceSvg(text: string): string {
  return escapeXml(text).split("⫫").join('⊥<tspan dx="-0.5em">⊥</tspan><tspan dx="0.05em"></tspan>');
}
