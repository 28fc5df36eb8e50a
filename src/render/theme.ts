/**
 * The wakeplane look: neutral, paper-like, one typeface (DejaVu Sans, installed with fontconfig so that librsvg and
 * the browser draw the same glyphs). Colours of lines and markers come from the Okabe & Ito (2008) palette, which
 * stays distinct for the common colour-vision deficiencies.
 */
export const theme = {
  font: "'DejaVu Sans', sans-serif",
  paper: '#fbfaf6',
  panel: '#f2f0ea',
  ink: '#1f1e1b',
  muted: '#66625a',
  rule: '#d8d4ca',
  faint: '#ebe8e0',
  masked: '#cfcbc2',
  maskedInk: '#8a857a',
  /** Okabe & Ito (2008), "Color Universal Design": blue, vermillion, bluish green, reddish purple, orange, sky blue. */
  series: ['#0072B2', '#D55E00', '#009E73', '#CC79A7', '#E69F00', '#56B4E9'],
  /** SVG user units per inch: a 900-unit-wide figure prints 7.5 in wide. */
  unitsPerInch: 120,
} as const;
