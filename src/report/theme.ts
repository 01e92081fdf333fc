/**
 * The report's visual identity: colours, fonts and sizes shared by the graph drawing, the
 * forest plot and the HTML stylesheet.
 *
 * Colours are taken from the Okabe–Ito palette, chosen to stay distinguishable under the common
 * forms of colour-vision deficiency (Okabe M., Ito K. 2008, "Color Universal Design (CUD): how to
 * make figures and presentations that are friendly to colorblind people", https://jfly.uni-koeln.de/color/).
 * Meaning is never carried by colour alone: every coloured mark also differs in shape or dash pattern.
 */

/** Okabe–Ito colours used by the report. */
export const PALETTE = {
  /** measured nodes, consistent claims */
  blue: "#0072B2",
  /** contradicted claims and contradiction connectors */
  vermillion: "#D55E00",
  /** bidirected edges (unmeasured common causes) */
  purple: "#CC79A7",
  sky: "#56B4E9",
  orange: "#E69F00",
  green: "#009E73",
} as const;

/** Neutral colours. */
export const INK = {
  text: "#1f2933",
  muted: "#52606d",
  faint: "#9aa5b1",
  rule: "#d9e2ec",
  panel: "#f5f7fa",
  arrow: "#3e4c59",
  measuredFill: "#e6f1f8",
  unmeasuredFill: "#f7f7f5",
  unmeasuredStroke: "#7b8794",
  contradictionLabelFill: "#fff4ec",
  band: "#e9eef3",
} as const;

/** System sans-serif font stack: nothing is fetched. */
export const FONT_STACK =
  'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "Helvetica Neue", Arial, "Liberation Sans", sans-serif';

/** Monospace stack for command lines and hashes. */
export const MONO_STACK = 'ui-monospace, "SFMono-Regular", Menlo, Consolas, "DejaVu Sans Mono", "Liberation Mono", monospace';
