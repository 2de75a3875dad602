/**
 * The four committed demo releases (2026.1 to 2026.4) and a "clean"
 * release for recovery tests, all observing one universe.
 *
 *   2026.1  first internal release: astrometric catalogue A (older, larger errors);
 *           m_h of two supernova hosts carries a +0.03 mag photometric zero-point error.
 *   2026.2  parallaxes from catalogue B (errors 40 % smaller, revised zero point);
 *           every other table byte-identical to 2026.1.
 *   2026.3  100 more Hubble-flow SNe (the first 150 unchanged); the m_h error of the
 *           two hosts corrected; one more systematic variant.
 *   2026.4  published BLINDED: a second-season Hubble-flow sample of 150 SNe that no earlier
 *           release contains (pool entries 251-400), every other table as in 2026.3.
 *           The first-season SNe are left out on purpose: the same SN in an unblinded and a
 *           blinded release would give the offset away as the difference of its magnitudes.
 */
import { COLLABORATION, FIELD_NAME, GALAXY_NAME } from './names.ts';
import { statedZeroPoint } from './observe.ts';
import type {
  CepheidCatalogue,
  DemoAnalysis,
  DemoVariant,
  HubbleFlowCatalogue,
  NotesContext,
  ParallaxCatalogue,
  ReleaseSpec,
  SimpleCatalogue,
} from './spec.ts';
import type { Universe } from './universe.ts';

/** Seed of the committed demo releases. */
export const DEMO_SEED = 20260216;

/** Analysis choices written by every demo release (values the truth was generated with). */
export const DEMO_ANALYSIS: Readonly<DemoAnalysis> = Object.freeze({
  parallax_floor: 0,
  r_v: 3.1,
  ms_color_range: [0.4, 1.2] as [number, number],
  ms_poly_degree: 3,
  ms_feh_slope: 0.98,
  wesenheit_r: 0.386,
  pl_pivot_logp: 1,
  fit_pl_metallicity: true,
  sn_alpha: null,
  sn_beta: null,
  z_min: 0.0233,
  z_max: 0.15,
  sigma_pec: 250,
  q0: -0.55,
  j0: 1,
  clip_sigma: 3.5,
});

const BASE_VARIANTS: DemoVariant[] = [
  { name: 'no metallicity term', fit_pl_metallicity: false },
  { name: 'z_min 0.01', z_min: 0.01 },
  { name: 'R_V 3.3', r_v: 3.3 },
  // Alternatives on both sides of the baseline: a source's error is half the range they span (src/ladder/budget.ts).
  { name: 'R_V 2.9', r_v: 2.9 },
  { name: 'clipping at 3.0 sigma', clip_sigma: 3.0 },
  { name: 'clipping at 4.0 sigma', clip_sigma: 4.0 },
  { name: 'no host-mass step', sn_mass_step_logmass: null },
];
const FIXED_ALPHA_BETA: DemoVariant = { name: 'alpha and beta fixed', sn_alpha: 0.14, sn_beta: 3.1 };

export const PARALLAX_A: Readonly<ParallaxCatalogue> = Object.freeze({
  version: 'A',
  label: 'astrometric catalogue A',
  zeroPointMas: -0.031,
  statedZeroPointErrMas: 0.01,
  // Catalogue B's errors are 40 % smaller: B = 0.6 A.
  errorScale: 1 / 0.6,
});

export const PARALLAX_B: Readonly<ParallaxCatalogue> = Object.freeze({
  version: 'B',
  label: 'astrometric catalogue B',
  zeroPointMas: -0.024,
  statedZeroPointErrMas: 0.004,
  errorScale: 1,
});

const SYSTEMS_1: SimpleCatalogue = { version: 'S1', label: 'system summary v1' };
const MAIN_SEQUENCE_1: SimpleCatalogue = { version: 'MS1', label: 'main-sequence photometry v1' };
const CALIBRATORS_1: SimpleCatalogue = { version: 'SC1', label: 'calibrator light-curve fits v1' };

/** The hosts whose m_h carried the +0.03 mag error in 2026.1 and 2026.2 (second and fifth host). */
export function offsetHosts(universe: Universe): string[] {
  const hosts = universe.systems.filter((s) => s.group === 'sn_host').map((s) => s.id);
  return [hosts[1], hosts[4]].filter((h): h is string => h !== undefined);
}

export const MH_OFFSET_MAG = 0.03;

/**
 * Hubble-flow pool of the demo universe at scale 1: 250 first-season SNe (2026.1-2026.3)
 * and 150 second-season SNe (2026.4). The pool is drawn last from its own stream, so
 * enlarging it leaves every other part of the universe, and the first 250 SNe, unchanged.
 */
export const DEMO_HUBBLE_FLOW_POOL = 400;
/** Blinding of 2026.4: public blinding id and date (the demo key is in scripts/generate-demo.ts). */
export const DEMO_BLINDING = Object.freeze({ blindingId: 'lantern-season-2', date: '2026-11-16' });

function hubbleFlowCount(universe: Universe, atScale1: number): number {
  return Math.min(universe.snHubbleFlow.length, Math.max(1, Math.round(atScale1 * universe.scale)));
}

/** The notes of 2026.1: what the first release contains. */
function notes2026_1(nHosts: number): (ctx: NotesContext) => string {
  return (ctx: NotesContext) =>
    [
      '# Release 2026.1',
      '',
      `First internal release of the ${COLLABORATION}'s distance-ladder data.`,
      '',
      `- Parallaxes: ${ctx.rows.parallax} stars in five nearby clusters and in the ${FIELD_NAME} Cepheid group,`,
      `  from astrometric catalogue A. We adopt a zero point of ${fmt(ctx.statedZeroPointMas)} mas, uncertain by ${fmt(ctx.statedZeroPointErrMas)} mas.`,
      `- Main-sequence photometry: ${ctx.rows.main_sequence} stars in the five parallax clusters, three more distant clusters`,
      `  and the galaxy ${GALAXY_NAME}.`,
      `- Cepheids: ${ctx.rows.cepheids}, from the ${FIELD_NAME} group out to ${nHosts} supernova hosts.`,
      `- Supernovae: ${ctx.rows.sn_calibrators} in Cepheid hosts and ${ctx.rows.sn_hubble_flow} in the Hubble flow;`,
      '  the analysis keeps 0.0233 ≤ z ≤ 0.15.',
      '',
      'Synthetic demonstration data: every object, name and number is invented.',
    ].join('\n');
}

/** The notes of 2026.2: the new parallax catalogue and its zero point. */
function notes2026_2(zpA: number): (ctx: NotesContext) => string {
  return (ctx: NotesContext) =>
    [
      '# Release 2026.2',
      '',
      "Parallaxes now come from astrometric catalogue B, whose errors are about 40 % smaller than catalogue A's.",
      `The zero point was re-derived for the new catalogue: ${fmt(ctx.statedZeroPointMas)} mas, uncertain by ${fmt(ctx.statedZeroPointErrMas)} mas`,
      `(catalogue A: ${fmt(zpA)} mas, uncertain by ${fmt(PARALLAX_A.statedZeroPointErrMas)} mas).`,
      '',
      'Every other table is unchanged from 2026.1.',
      '',
      'Synthetic demonstration data: every object, name and number is invented.',
    ].join('\n');
}

/** The notes of 2026.3: the larger Hubble-flow sample, the recalibrated H photometry, the new variant. */
function notes2026_3(nFlow1: number, nFlow2: number, hosts: readonly string[]): (ctx: NotesContext) => string {
  return (ctx: NotesContext) =>
    [
      '# Release 2026.3',
      '',
      `- Hubble flow: ${nFlow2 - nFlow1} more supernovae, ${ctx.rows.sn_hubble_flow} in all; the first ${nFlow1} are unchanged.`,
      ...(hosts.length > 0
        ? [
            `- Cepheids: the H-band photometry of ${hosts.join(' and ')} was recalibrated. A zero-point error in`,
            `  the near-infrared reduction had made their m_h ${fmt(MH_OFFSET_MAG)} mag too faint in 2026.1 and 2026.2.`,
            '  All other Cepheid measurements are unchanged.',
          ]
        : []),
      `- New systematic variant: supernova alpha and beta fixed at ${fmt(FIXED_ALPHA_BETA.sn_alpha!)} and ${fmt(FIXED_ALPHA_BETA.sn_beta!)}.`,
      '',
      'Parallaxes (catalogue B), main-sequence photometry and calibrator supernovae are unchanged from 2026.2.',
      '',
      'Synthetic demonstration data: every object, name and number is invented.',
    ].join('\n');
}

/** The notes of 2026.4: the second season, analysed blind. */
function notes2026_4(nFlow2: number): (ctx: NotesContext) => string {
  return (ctx: NotesContext) =>
    [
      '# Release 2026.4 (blinded)',
      '',
      `- Hubble flow: the second observing season, ${ctx.rows.sn_hubble_flow} supernovae that no earlier release contains.`,
      `  The ${nFlow2} first-season supernovae of 2026.1 to 2026.3 are left out of this release: the same supernova in an`,
      '  unblinded and a blinded release would reveal the blinding offset as the difference of its two magnitudes.',
      '  The two seasons will be combined after unblinding.',
      '- This release is **blinded**: its Hubble-flow magnitudes carry one hidden offset, so H0, the intercept a_B and',
      '  the H0 of every variant are hidden until the collaboration unblinds. Every other result is the true one.',
      '',
      'Parallaxes, main-sequence photometry, Cepheids and calibrator supernovae are unchanged from 2026.3.',
      '',
      'Synthetic demonstration data: every object, name and number is invented. The demonstration key that',
      'blinded this release is public (see the README), so anyone can try unblinding a copy of it.',
    ].join('\n');
}

/** The four demo releases, in date order. */
export function demoReleaseSpecs(universe: Universe): ReleaseSpec[] {
  const hosts = offsetHosts(universe);
  const cepheidsV1: CepheidCatalogue = {
    version: 'C1',
    label: 'Cepheid photometry v1',
    mhOffsetsMag: Object.fromEntries(hosts.map((h) => [h, MH_OFFSET_MAG])),
  };
  // Same raw measurements (same noise), H zero point of the two hosts re-derived.
  const cepheidsV2: CepheidCatalogue = { version: 'C1', label: 'Cepheid photometry v2, H zero point recalibrated', mhOffsetsMag: {} };
  const nFlow1 = hubbleFlowCount(universe, 150);
  const nFlow2 = hubbleFlowCount(universe, 250);
  const flow1: HubbleFlowCatalogue = { version: 'HF1', label: 'Hubble-flow light-curve fits v1', count: nFlow1 };
  const flow2: HubbleFlowCatalogue = { version: 'HF1', label: 'Hubble-flow light-curve fits v2, extended sample', count: nFlow2 };
  const nHosts = universe.systems.filter((s) => s.group === 'sn_host').length;
  const zpA = statedZeroPoint(universe.seed, PARALLAX_A);

  const r1: ReleaseSpec = {
    id: '2026.1',
    title: 'First internal release',
    date: '2026-02-16',
    previous: null,
    blinded: false,
    catalogues: {
      systems: SYSTEMS_1,
      parallax: PARALLAX_A,
      mainSequence: MAIN_SEQUENCE_1,
      cepheids: cepheidsV1,
      snCalibrators: CALIBRATORS_1,
      snHubbleFlow: flow1,
    },
    analysis: { ...DEMO_ANALYSIS },
    variants: BASE_VARIANTS,
    notes: notes2026_1(nHosts),
  };

  const r2: ReleaseSpec = {
    ...r1,
    id: '2026.2',
    title: 'New parallax catalogue',
    date: '2026-06-15',
    previous: '2026.1',
    catalogues: { ...r1.catalogues, parallax: PARALLAX_B },
    notes: notes2026_2(zpA),
  };

  const r3: ReleaseSpec = {
    ...r2,
    id: '2026.3',
    title: 'Larger Hubble-flow sample and recalibrated H photometry',
    date: '2026-10-05',
    previous: '2026.2',
    catalogues: { ...r2.catalogues, cepheids: cepheidsV2, snHubbleFlow: flow2 },
    variants: [...BASE_VARIANTS, FIXED_ALPHA_BETA],
    notes: notes2026_3(nFlow1, nFlow2, hosts),
  };
  // Second season: pool entries after the first season's, redrawn with their own light-curve fits.
  const nFlow4 = Math.max(0, Math.min(universe.snHubbleFlow.length - nFlow2, Math.round(150 * universe.scale)));
  const flow4: HubbleFlowCatalogue = { version: 'HF2', label: 'Hubble-flow light-curve fits, second season', first: nFlow2, count: nFlow4 };
  const r4: ReleaseSpec = {
    ...r3,
    id: '2026.4',
    title: 'Second-season Hubble-flow sample, analysed blind',
    date: DEMO_BLINDING.date,
    previous: '2026.3',
    blinded: false,
    blindForPublication: { ...DEMO_BLINDING },
    catalogues: { ...r3.catalogues, snHubbleFlow: flow4 },
    notes: notes2026_4(nFlow2),
  };
  return [r1, r2, r3, r4];
}

/**
 * A release with no planted errors, for recovery tests and benchmarks: catalogue B
 * parallaxes, no m_h offsets, the whole Hubble-flow pool, no variants.
 */
export function cleanReleaseSpec(universe: Universe, id: string): ReleaseSpec {
  return {
    id,
    title: `Generated release ${id}`,
    date: '2026-01-01',
    previous: null,
    blinded: false,
    catalogues: {
      systems: SYSTEMS_1,
      parallax: PARALLAX_B,
      mainSequence: MAIN_SEQUENCE_1,
      cepheids: { version: 'C1', label: 'Cepheid photometry v1', mhOffsetsMag: {} },
      snCalibrators: CALIBRATORS_1,
      snHubbleFlow: { version: 'HF1', label: 'Hubble-flow light-curve fits v1', count: universe.snHubbleFlow.length },
    },
    analysis: { ...DEMO_ANALYSIS },
    variants: [],
    notes: null,
  };
}

function fmt(x: number): string {
  return x.toFixed(3).replace(/0+$/, '').replace(/\.$/, '').replace(/^-/, '\u2212');
}
