/**
 * What one release observes of the demo universe: which catalogue version each
 * table comes from, and the manifest written to release.yaml.
 *
 * A table's bytes depend only on (universe, its catalogue, observation seed):
 * two releases that name the same catalogue for a table write identical files,
 * and a new catalogue version redraws that table's noise.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { TableName } from '../types/release.ts';

export interface ParallaxCatalogue {
  version: string;
  /** Long name written in the table's metadata. */
  label: string;
  /** True zero point of the catalogue, mas: measured = 1000 / d_pc + zeroPointMas + noise. */
  zeroPointMas: number;
  /** Error the team states for its zero-point estimate; the stated value is drawn from N(zeroPointMas, this). */
  statedZeroPointErrMas: number;
  /** Multiplier on the base parallax errors (1 = the newer catalogue's level). */
  errorScale: number;
}

export interface CepheidCatalogue {
  version: string;
  label: string;
  /** Photometric zero-point errors carried in m_h, by host system (mag, added to m_h). */
  mhOffsetsMag: Record<string, number>;
}

export interface HubbleFlowCatalogue {
  version: string;
  label: string;
  /** Index in the universe's pool of the first Hubble-flow SN observed (default 0). */
  first?: number;
  /** Number of Hubble-flow SNe observed: `count` of the pool from `first` on (default: all from `first`). */
  count?: number;
}

export interface SimpleCatalogue {
  version: string;
  label: string;
}

/** Analysis keys the demo writes (the zero point comes from the parallax catalogue). */
export type DemoAnalysis = Partial<Omit<AnalysisChoices, 'parallax_zero_point' | 'parallax_zero_point_err'>>;

export interface DemoVariant extends DemoAnalysis {
  name: string;
}

export interface NotesContext {
  statedZeroPointMas: number;
  statedZeroPointErrMas: number;
  rows: Record<string, number>;
}

export interface ReleaseSpec {
  id: string;
  title: string;
  /** ISO date YYYY-MM-DD. */
  date: string;
  previous: string | null;
  blinded: boolean;
  catalogues: {
    systems: SimpleCatalogue;
    parallax: ParallaxCatalogue;
    mainSequence: SimpleCatalogue;
    cepheids: CepheidCatalogue;
    snCalibrators: SimpleCatalogue;
    snHubbleFlow: HubbleFlowCatalogue;
  };
  analysis: DemoAnalysis;
  variants: DemoVariant[];
  /** Release notes (Markdown), or a function of what was observed; null writes no notes.md. */
  notes: string | ((ctx: NotesContext) => string) | null;
  /** Tables this release does not provide (files not written). */
  omitTables?: TableName[];
  /**
   * Published only blinded: the generator observes the release unblinded (`blinded` false)
   * and the demo script blinds it with the public demo key before writing it
   * (scripts/generate-demo.ts). Absent: published as observed.
   */
  blindForPublication?: { blindingId: string; date: string };
}
