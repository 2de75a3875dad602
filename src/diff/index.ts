/**
 * Comparing two data releases (public entry point): what changed in the inputs, how the
 * results moved and by how many sigma of the difference, what moved H0 (attribution to the
 * input groups), the rows that moved it most, and the data of the overlay figures.
 *
 *   const report = await compareReleaseDirs('content/releases/2026.2', 'content/releases/2026.3');
 *   renderMarkdown(report);   // the message to paste; JSON.stringify(report) is `--format json`
 */
export {
  compareReleaseDirs,
  compareReleases,
  ATTRIBUTION_METHOD,
  NEGLIGIBLE_SHIFT_OF_ERROR,
  ROW_REFIT_CAP,
  SHIFT_FLAG_SIGMA,
  TOP_OBJECTS,
  type CompareOptions,
} from './compare.ts';
export { renderMarkdown, renderText } from './render.ts';
export {
  h0Headline,
  MESSAGE,
  PLAIN,
  rankedContributions,
  rankedInputChanges,
  sigmaWords,
  signedNumber,
  TYPOGRAPHIC,
  type H0Headline,
  type Typography,
} from './vocabulary.ts';
export { buildLinks, COMPARE_FIGURES, compareFigureId, type CompareFigure } from './links.ts';
export { SIGMA_METHOD } from './sigma.ts';
export { INFLUENCE_METHOD } from './influence.ts';
export { benchmarkDiff, type DiffBenchResult } from './bench.ts';
export { compareBlinding, HIDDEN_WHEN_BLINDED } from './blinding.ts';
export * from './types.ts';
