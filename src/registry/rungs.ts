/**
 * The rungs of the ladder, one descriptor each: what a rung reads, what it adds
 * to the global fit, where the report shows it and which method note stands
 * beside it. Adding a rung means adding a descriptor here and the parts it
 * names; DEVELOPERS.md ("Adding a rung") lists them in this order, and
 * tests/registry/registry.test.ts fails while any part is missing.
 *
 * The descriptors are data, not code: the physics lives in the modules they
 * name (src/ladder), the pages in site/. Parameters are those results.json
 * publishes under `parameters` (src/ladder/assemble.ts takes their units and
 * meanings from here, and the blinding marks from `hiddenWhenBlinded`).
 */
import type { Results } from '../types/results.ts';
import type { TableName } from '../types/release.ts';

/** A global parameter a rung adds to the fit, as results.json publishes it. */
export interface ParameterSpec {
  /** Key under `parameters` in results.json. */
  name: string;
  /** Unit as results.json states it ('' when dimensionless). */
  unit: string;
  /** What it is, in one line (results.json's `description`). */
  meaning: string;
  /**
   * True when its value follows from the Hubble-flow magnitudes, which carry the
   * blinding offset: a blinded release never shows it unmarked (src/blinding).
   */
  hiddenWhenBlinded: boolean;
}

export type RungId = 'parallax' | 'main_sequence' | 'cepheids' | 'supernovae' | 'hubble_flow';

export interface RungSpec {
  /** Also the `rung` of its method note's frontmatter. */
  id: RungId;
  title: string;
  /** The value of results.json's `reached` when the ladder stops after this rung. */
  reached: Results['reached'];
  /** Input tables it reads (src/registry/tables.ts). */
  tables: TableName[];
  /** Modules under src/ladder holding its physics, the first one its entry point. */
  modules: string[];
  /** Global parameters it adds, in the order results.json lists them. */
  parameters: ParameterSpec[];
  /** Its page under releases/<id>/ (a folder name). */
  page: string;
  /** Its method note: content/methods/<note>.md. */
  note: string;
  /** Figures on its page (ids registered in src/report/figures/index.ts). */
  figures: string[];
}

function param(name: string, unit: string, meaning: string, hiddenWhenBlinded = false): ParameterSpec {
  return { name, unit, meaning, hiddenWhenBlinded };
}

/** Rungs in the order of the ladder: each calibrates the next. */
export const RUNGS: readonly RungSpec[] = [
  {
    id: 'parallax',
    title: 'Parallax',
    reached: 'parallax',
    tables: ['parallax', 'systems'],
    modules: ['parallax.ts', 'parallaxAnchors.ts', 'parallaxPosterior.ts'],
    parameters: [param('parallax_zero_point', 'mas', 'parallax zero point after the global fit (prior: release value)')],
    page: 'parallax',
    note: 'parallax',
    figures: ['parallax-anchors', 'parallax-posteriors'],
  },
  {
    id: 'main_sequence',
    title: 'Main sequence',
    reached: 'main_sequence',
    tables: ['main_sequence', 'systems'],
    modules: ['mainSequence.ts', 'mainSequenceLocus.ts', 'mainSequenceTarget.ts', 'mainSequenceMixture.ts', 'mainSequencePriors.ts', 'mainSequenceChecks.ts'],
    parameters: [],
    page: 'main-sequence',
    note: 'main-sequence',
    figures: ['ms-locus', 'ms-targets'],
  },
  {
    id: 'cepheids',
    title: 'Cepheids',
    reached: 'cepheids',
    tables: ['cepheids'],
    modules: ['cepheids.ts', 'cepheidMixture.ts'],
    parameters: [
      param('M_W', 'mag', 'Cepheid Wesenheit absolute magnitude at the pivot period'),
      param('b_W', 'mag/dex', 'slope of the period-luminosity relation in log10 P'),
      param('Z_W', 'mag/dex', 'metallicity term of the period-luminosity relation ([O/H])'),
      param('sigma_int_cepheid', 'mag', 'intrinsic scatter of the Cepheid Wesenheit relation (estimated)'),
    ],
    page: 'cepheids',
    note: 'cepheids',
    figures: ['pl-relation', 'pl-residuals'],
  },
  {
    id: 'supernovae',
    title: 'Supernovae',
    reached: 'sn_calibrators',
    tables: ['sn_calibrators'],
    modules: ['supernovae.ts', 'massStep.ts'],
    parameters: [
      param('M_B', 'mag', 'absolute peak magnitude of a standardised type Ia supernova', true),
      param('delta_M_host', 'mag', 'host-mass step: added to the standardised magnitude of supernovae in hosts above the step mass'),
      param('alpha', '', 'supernova stretch coefficient (Tripp)'),
      param('beta', '', 'supernova colour coefficient (Tripp)'),
      param('sigma_int_sn', 'mag', 'intrinsic scatter of standardised supernovae (estimated)'),
    ],
    page: 'supernovae',
    note: 'supernovae',
    figures: ['sn-calibrators'],
  },
  {
    id: 'hubble_flow',
    title: 'Hubble flow',
    reached: 'hubble_flow',
    tables: ['sn_hubble_flow'],
    modules: ['hubbleFlow.ts', 'kinematics.ts'],
    parameters: [param('a_B', '', 'intercept of the Hubble-flow magnitude-redshift relation', true)],
    page: 'hubble-flow',
    note: 'hubble-flow',
    figures: ['hubble-diagram', 'hubble-residuals'],
  },
];

const BY_NAME = new Map(RUNGS.flatMap((r) => r.parameters.map((p) => [p.name, p] as const)));

/** The descriptor of a published parameter, or undefined for a name no rung adds. */
export function parameterSpec(name: string): ParameterSpec | undefined {
  return BY_NAME.get(name);
}

/** Parameters whose values carry the blinding offset (besides those the calibration marks `blinded`). */
export const HIDDEN_WHEN_BLINDED: readonly string[] = RUNGS.flatMap((r) => r.parameters.filter((p) => p.hiddenWhenBlinded).map((p) => p.name));
