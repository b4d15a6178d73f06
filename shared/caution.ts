/**
 * The caution every Airshade result carries: one text, written here only. Every CLI command prints `CAUTION`
 * once at the end of its screen output; every file it writes holds it whole (a `caution` member in JSON and in
 * each GeoJSON FeatureCollection, a `<desc>` and the caption in the diagram SVG, the ImageDescription tag in
 * GeoTIFF results); the app shows it in About & cautions and puts it in its exports. `CAUTION_SHORT` is only
 * for the app's status line, which also shows the full text on hover.
 *
 * Plain ASCII on purpose: it goes into TIFF ASCII tags (7-bit) unchanged and reads the same in any terminal.
 * bin/serve.mjs runs without a TypeScript loader and keeps a copy of this text (test/caution.test.ts checks
 * that the two are identical).
 */
export const CAUTION =
  'A planning aid, not a certified or flight-inspected result. Results depend on the terrain data and on the ' +
  "refraction assumed; defer to the local authority's standards and licensed engineering practice.";

/** A status-line form; never the only caution of an output. */
export const CAUTION_SHORT = 'Planning aid only: not certified or flight-inspected.';
