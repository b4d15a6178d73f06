/**
 * Placeholder entry of the web app (its issue builds the map and panels). It already shows the cautions so a
 * page built from it is never mistaken for a finished tool.
 */
export const CAUTION =
  'Airshade is a planning aid, not a certified or flight-inspected result. Coverage depends on the terrain data ' +
  'and on refraction; defer to the local authority’s standards and licensed engineering practice.';
