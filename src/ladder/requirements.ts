/**
 * What the ladder requires of a release beyond the input contract: a structure
 * in which every rung can be computed and reaches a geometric anchor.
 *
 * 1. every geometric anchor (a cluster or galaxy with parallax rows) has a mean
 *    parallax that gives a distance modulus (parallaxAnchors.ts);
 * 2. main-sequence targets have an anchor locus, calibrated on enough anchor
 *    stars in the colour range (mainSequence.ts);
 * 3. the Hubble-flow table, when given, has supernovae in the redshift range,
 *    each with a distance (hubbleFlow.ts);
 * 4. some Cepheid system has a geometric or main-sequence distance, or a field
 *    Cepheid its own parallax, and every supernova host has Cepheids or a
 *    distance of its own (this module).
 *
 * The rules are stated once, in the rung each belongs to; this module applies
 * them in the order the ladder meets them. `runLadder` calls `requireLadder`
 * before any fit, so `rungbook calibrate`, every systematic variant and every
 * release a comparison recalibrates refuse with these words; `rungbook check`
 * lists all of them (src/ladder/calibrate.ts, checkLadder). A stage whose rule
 * fails stops the list: later stages depend on it, and their problems would
 * only repeat it. Cost: one pass over the tables.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import { AnalysisError, type AnalysisProblem } from '../types/issues.ts';
import type { ParallaxRow, Release } from '../types/release.ts';
import { hubbleFlowProblem } from './hubbleFlow.ts';
import { mainSequenceProblem, mainSequenceTargets } from './mainSequence.ts';
import { anchorParallaxProblem } from './parallaxAnchors.ts';

/** How many system names a message lists before "and N more". */
const NAMES_SHOWN = 10;

const quoted = (names: readonly string[]): string =>
  names
    .slice(0, NAMES_SHOWN)
    .map((s) => `"${s}"`)
    .join(', ') + (names.length > NAMES_SHOWN ? ` and ${names.length - NAMES_SHOWN} more` : '');

/** The geometric anchors of a release (systems not of kind field that have parallax rows), with their rows. */
export function geometricAnchors(release: Release): { system: string; rows: ParallaxRow[] }[] {
  const bySystem = new Map<string, ParallaxRow[]>();
  for (const r of release.parallax) {
    const list = bySystem.get(r.system);
    if (list) list.push(r);
    else bySystem.set(r.system, [r]);
  }
  return release.systems.filter((s) => s.kind !== 'field' && bySystem.has(s.system)).map((s) => ({ system: s.system, rows: bySystem.get(s.system)! }));
}

/** Field stars whose own parallax anchors a Cepheid (a star of a field system that is also in cepheids). */
export function fieldCepheidStars(release: Release): string[] {
  const field = new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system));
  const cepheids = new Set(release.cepheids.map((c) => c.star));
  return release.parallax.filter((r) => field.has(r.system) && cepheids.has(r.star)).map((r) => r.star);
}

/**
 * Rule 4: the Cepheid systems and the supernova hosts reach a geometric anchor. `distanceSystems`
 * are the systems with a distance of their own (geometric anchors and main-sequence targets),
 * `fieldStars` the field Cepheids with their own parallax. Empty for a release without Cepheids.
 */
export function linkageProblems(release: Release, distanceSystems: readonly string[], fieldStars: readonly string[]): AnalysisProblem[] {
  if (release.cepheids.length === 0) return [];
  const anchored = new Set(distanceSystems);
  const ownParallax = new Set(fieldStars);
  const problems: AnalysisProblem[] = [];
  if (!release.cepheids.some((c) => anchored.has(c.system) || ownParallax.has(c.star))) {
    const systems = [...new Set(release.cepheids.map((c) => c.system))];
    const noTable = release.absentTables.includes('parallax') ? ' The release has no parallax table at all.' : '';
    problems.push({
      message:
        `The ladder cannot reach a geometric anchor from any Cepheid system (${quoted(systems)}): ` +
        `none has a parallax or main-sequence distance, and no field Cepheid has its own parallax.${noTable}`,
      hint: noTable
        ? 'Add a parallax table with the members of at least one cluster that has Cepheids or main-sequence photometry.'
        : 'Add parallaxes or main-sequence photometry for at least one Cepheid system.',
    });
  }
  const hosts = new Set(release.cepheids.map((c) => c.system));
  const orphans = [...new Set(release.snCalibrators.map((s) => s.system))].filter((s) => !hosts.has(s) && !anchored.has(s));
  if (orphans.length > 0) {
    const lines = release.snCalibrators.filter((s) => orphans.includes(s.system)).map((s) => s.line);
    const one = orphans.length === 1;
    problems.push({
      message:
        `The ladder cannot reach a geometric anchor from ${quoted(orphans)}: ` +
        `${one ? 'this supernova host has' : 'these supernova hosts have'} no Cepheids and no distance of ${one ? 'its' : 'their'} own. ` +
        `${one ? 'Its' : 'Their'} supernovae are on sn_calibrators line${lines.length === 1 ? '' : 's'} ${lines.slice(0, NAMES_SHOWN).join(', ')}${lines.length > NAMES_SHOWN ? ', ...' : ''}.`,
      hint: 'Add Cepheids for the host to cepheids, or remove its supernovae from sn_calibrators.',
    });
  }
  return problems;
}

/** Every reason the ladder cannot be calibrated from this release with these choices, in the order the ladder meets them. */
export function ladderProblems(release: Release, analysis: AnalysisChoices): AnalysisProblem[] {
  // 1. Geometric anchors, each on its own.
  const anchors = geometricAnchors(release);
  const anchorProblems = anchors.flatMap((a) => anchorParallaxProblem(a.system, a.rows, analysis.parallax_zero_point, analysis.parallax_floor) ?? []);
  if (anchorProblems.length > 0) return anchorProblems;
  // 2. The main-sequence locus and its targets.
  const anchorSystems = anchors.map((a) => a.system);
  const ms = mainSequenceProblem(release, analysis, anchorSystems);
  if (ms !== null) return [ms];
  // 3 and 4 do not depend on each other.
  const problems: AnalysisProblem[] = [];
  const flow = hubbleFlowProblem(release.snHubbleFlow, analysis);
  if (flow !== null) problems.push(flow);
  const distanceSystems = [...anchorSystems, ...mainSequenceTargets(release).map((t) => t.system)];
  problems.push(...linkageProblems(release, distanceSystems, fieldCepheidStars(release)));
  return problems;
}

/** Throw the first of ladderProblems as an AnalysisError (the ladder's refusal). */
export function requireLadder(release: Release, analysis: AnalysisChoices): void {
  const [first] = ladderProblems(release, analysis);
  if (first !== undefined) throw AnalysisError.of(first);
}
