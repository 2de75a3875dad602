/**
 * Column definitions of the six release tables as the demo writes them: names,
 * datatypes and units of the input contract (release-format.md), with one
 * description per column.
 */
import type { EcsvColumn } from '../io/writeEcsv.ts';
import type { TableName } from '../types/release.ts';

const str = (name: string, description: string): EcsvColumn => ({ name, datatype: 'string', description });
const num = (name: string, unit: string | undefined, description: string): EcsvColumn =>
  unit === undefined ? { name, datatype: 'float64', description } : { name, datatype: 'float64', unit, description };

const SN_LIGHT_CURVE: EcsvColumn[] = [
  num('m_b', 'mag', 'Peak apparent B magnitude from the light-curve fit'),
  num('m_b_err', 'mag', 'Standard error of m_b'),
  num('x1', undefined, 'Light-curve stretch parameter'),
  num('x1_err', undefined, 'Standard error of x1'),
  num('c', 'mag', 'Light-curve colour parameter'),
  num('c_err', 'mag', 'Standard error of c'),
  num('cov_mb_x1', 'mag', 'Covariance of the m_b and x1 errors'),
  num('cov_mb_c', 'mag2', 'Covariance of the m_b and c errors'),
  num('cov_x1_c', 'mag', 'Covariance of the x1 and c errors'),
  num('host_logmass', 'dex', 'log10 of the host stellar mass in solar masses'),
];

export const TABLE_COLUMNS: Readonly<Record<TableName, readonly EcsvColumn[]>> = Object.freeze({
  systems: [
    str('system', 'Unique system identifier, used by the other tables'),
    str('kind', 'cluster, galaxy or field (a loose group anchored star by star)'),
    num('feh', 'dex', 'Mean metallicity [Fe/H]'),
    num('feh_err', 'dex', 'Standard error of feh'),
    num('ebv', 'mag', 'Prior on the reddening E(B-V)'),
    num('ebv_err', 'mag', 'Standard error of the E(B-V) prior; empty with ebv given means fixed'),
    num('age_gyr', 'Gyr', 'Age estimate'),
  ],
  parallax: [
    str('star', 'Unique star identifier'),
    str('system', 'System the star belongs to'),
    num('parallax', 'mas', 'Trigonometric parallax as published, before zero-point correction'),
    num('parallax_err', 'mas', 'Standard error of the parallax'),
    num('ra', 'deg', 'Right ascension'),
    num('dec', 'deg', 'Declination'),
  ],
  main_sequence: [
    str('star', 'Star identifier, unique in this table'),
    str('system', 'System the star belongs to'),
    num('color', 'mag', 'Observed B-V colour'),
    num('color_err', 'mag', 'Standard error of the colour'),
    num('mag', 'mag', 'Observed V magnitude'),
    num('mag_err', 'mag', 'Standard error of the V magnitude'),
  ],
  cepheids: [
    str('star', 'Unique Cepheid identifier'),
    str('system', 'Host system'),
    num('period', 'd', 'Pulsation period'),
    num('m_h', 'mag', 'Mean near-infrared H magnitude'),
    num('m_h_err', 'mag', 'Standard error of m_h'),
    num('m_v', 'mag', 'Mean optical V magnitude'),
    num('m_v_err', 'mag', 'Standard error of m_v'),
    num('m_i', 'mag', 'Mean optical I magnitude'),
    num('m_i_err', 'mag', 'Standard error of m_i'),
    num('oh', 'dex', 'Oxygen abundance [O/H] relative to solar at the Cepheid'),
  ],
  sn_calibrators: [
    str('sn', 'Unique supernova identifier'),
    str('system', 'Host system (also hosts Cepheids)'),
    ...SN_LIGHT_CURVE,
  ],
  sn_hubble_flow: [
    str('sn', 'Unique supernova identifier'),
    num('z', undefined, 'Redshift in the CMB frame, corrected for coherent flows'),
    num('z_err', undefined, 'Standard error of z'),
    ...SN_LIGHT_CURVE,
  ],
});
