/**
 * One damaged release per rule for which `rungbook calibrate` refuses a release
 * (src/ladder/requirements.ts for the ladder's structure, the fits for what only
 * they can tell, the input contract and the records beside the tables), each a
 * copy of demo release 2026.1 with one small edit, and the words both commands
 * must use. Added to the random corpus of the fuzz test, where `rungbook check`
 * must refuse exactly what `rungbook calibrate` refuses, in the same words.
 */
import { cpSync, mkdirSync, symlinkSync, unlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { DEMO_RELEASES, editTable, setManifestValue } from '../trust/releaseCopy.ts';

export interface StructureCase {
  name: string;
  /** The rule the edit breaks, in words. */
  rule: string;
  edit: (dir: string) => void;
  /** How both commands must end, and a piece of the message both must print. */
  ending: 'ok' | 'input error' | 'analysis error';
  message: RegExp | null;
}

const ANCHORS = ['Alder', 'Birchmoor', 'Copperwell', 'Dunholt', 'Emberly'];

const keepRows = (table: string, keep: (row: string[], col: (name: string) => number, i: number) => boolean) => (dir: string) =>
  editTable(dir, table, (t, col) => {
    t.rows = t.rows.filter((r, i) => keep(r, col, i));
  });

const setColumn = (table: string, column: string, value: (old: string, row: string[], col: (name: string) => number) => string) => (dir: string) =>
  editTable(dir, table, (t, col) => {
    for (const r of t.rows) r[col(column)] = value(r[col(column)]!, r, col);
  });

export const STRUCTURE_CASES: readonly StructureCase[] = [
  // The ladder's structure (src/ladder/requirements.ts).
  {
    name: 'anchor-one-star',
    rule: 'an anchor needs at least two parallax stars',
    edit: (dir) => {
      let seen = false;
      keepRows('parallax', (r, col) => r[col('system')] !== 'Alder' || (!seen && (seen = true)))(dir);
    },
    ending: 'analysis error',
    message: /anchor "Alder" has 1 parallax star\(s\) \(line \d+ of parallax\); a mean parallax needs at least 2/,
  },
  {
    name: 'anchor-mean-not-positive',
    rule: "an anchor's mean corrected parallax must be positive",
    edit: setColumn('parallax', 'parallax', (v, r, col) => (r[col('system')] === 'Dunholt' ? '-1.5' : v)),
    ending: 'analysis error',
    message: /anchor "Dunholt": mean corrected parallax -1\.4\d* ± [\d.]+ mas is not positive/,
  },
  {
    name: 'anchor-fractional-error',
    rule: "an anchor's mean parallax must be known to 20 % or better",
    edit: setColumn('parallax', 'parallax_err', (v, r, col) => (r[col('system')] === 'Copperwell' ? String(Number(v) * 4000) : v)),
    ending: 'analysis error',
    message: /anchor "Copperwell": mean corrected parallax .* fractional error [\d.]+ > 0\.2/,
  },
  {
    name: 'no-parallax-table',
    rule: 'main-sequence photometry needs a geometric anchor: without a parallax table there is none',
    edit: (dir) => unlinkSync(join(dir, 'parallax.ecsv')),
    ending: 'analysis error',
    message: /main-sequence target\(s\) "Alder", .* but no geometric anchor has main-sequence rows \(the release has no parallax table\)/,
  },
  {
    name: 'no-parallax-no-main-sequence',
    rule: 'some Cepheid system must reach a geometric anchor',
    edit: (dir) => {
      unlinkSync(join(dir, 'parallax.ecsv'));
      unlinkSync(join(dir, 'main_sequence.ecsv'));
    },
    ending: 'analysis error',
    message:
      /The ladder cannot reach a geometric anchor from any Cepheid system \(.*\): none has a parallax or main-sequence distance, and no field Cepheid has its own parallax\. The release has no parallax table at all\./,
  },
  {
    name: 'cepheids-without-route',
    rule: 'some Cepheid system must reach a geometric anchor (parallax table present)',
    // Cepheids only in galaxies without a distance of their own: the anchored ones and the field Cepheids removed.
    edit: keepRows('cepheids', (r, col) => !['Hearthfield', 'Wrenmere', 'Fernhollow', 'Greywick', 'Hollinford', ...ANCHORS].includes(r[col('system')]!)),
    ending: 'analysis error',
    message:
      /The ladder cannot reach a geometric anchor from any Cepheid system \("Ivyreach", .*\): none has a parallax or main-sequence distance, and no field Cepheid has its own parallax\.\n/,
  },
  {
    name: 'targets-without-locus',
    rule: 'main-sequence targets need anchor photometry for the locus',
    edit: keepRows('main_sequence', (r, col) => !ANCHORS.includes(r[col('system')]!)),
    ending: 'analysis error',
    message: /main-sequence target\(s\) "Fernhollow", "Greywick", "Hollinford", "Wrenmere" but no geometric anchor has main-sequence rows/,
  },
  {
    name: 'locus-too-few-stars',
    rule: 'the locus needs five anchor stars per coefficient in the colour range',
    edit: (dir) => setManifestValue(dir, 'ms_color_range', '[0.4, 0.402]'),
    ending: 'analysis error',
    message: /\d+ anchor main-sequence star\(s\) lie in the colour range \[0\.4, 0\.402\]; a degree-3 locus needs at least 20/,
  },
  {
    name: 'no-hubble-flow-in-range',
    rule: 'a Hubble-flow table needs supernovae inside z_min <= z <= z_max',
    edit: (dir) => {
      setManifestValue(dir, 'z_min', '0.2');
      setManifestValue(dir, 'z_max', '0.3');
    },
    ending: 'analysis error',
    message: /No Hubble-flow supernova lies inside 0\.2 <= z <= 0\.3 \(all 150 are cut\)\./,
  },
  {
    name: 'series-not-positive',
    rule: 'every Hubble-flow supernova in the range needs a positive kinematic distance',
    edit: (dir) => setManifestValue(dir, 'j0', '1e9'),
    ending: 'analysis error',
    message: /With q0 = -0\.55 and j0 = 1000000000, the kinematic distance series is not positive at z = /,
  },
  {
    name: 'host-without-cepheids',
    rule: 'every supernova host needs Cepheids or a distance of its own',
    edit: keepRows('cepheids', (r, col) => r[col('system')] !== 'Rowanstead'),
    ending: 'analysis error',
    message:
      /The ladder cannot reach a geometric anchor from "Rowanstead": this supernova host has no Cepheids and no distance of its own\. Its supernovae are on sn_calibrators line \d+\./,
  },
  // What only the fits can tell (the baseline pass of the ladder, which check runs too).
  {
    name: 'one-period',
    rule: 'the Cepheid periods must span a range (period-luminosity slope)',
    edit: setColumn('cepheids', 'period', () => '10'),
    ending: 'analysis error',
    message: /The global fit cannot determine the period-luminosity slope b_W \(the Cepheid periods do not span a range\)\./,
  },
  {
    name: 'target-too-few-stars',
    rule: 'a main-sequence target needs five stars in the colour range',
    edit: (dir) => {
      let n = 0;
      keepRows('main_sequence', (r, col) => r[col('system')] !== 'Greywick' || (n += 1) <= 3)(dir);
    },
    ending: 'analysis error',
    message:
      /main-sequence target "Greywick" \(systems line \d+\): \d star\(s\) in the colour range \[0\.4, 1\.2\] \(single and binary colours\) at E\(B-V\) = [\d.-]+; at least 5 needed/,
  },
  // The input contract and the records beside the tables.
  {
    name: 'negative-redshift',
    rule: 'a Hubble-flow redshift is > 0',
    edit: (dir) => editTable(dir, 'sn_hubble_flow', (t, col) => void (t.rows[3]![col('z')] = `-${t.rows[3]![col('z')]}`)),
    ending: 'input error',
    message: /sn_hubble_flow\.ecsv:\d+: column "z": the value must be greater than zero; expected > 0, found "-0\.\d+"/,
  },
  {
    name: 'table-is-a-folder',
    rule: 'a table file is a readable regular file',
    edit: (dir) => {
      unlinkSync(join(dir, 'main_sequence.ecsv'));
      mkdirSync(join(dir, 'main_sequence.ecsv'));
    },
    ending: 'input error',
    message: /main_sequence\.ecsv: the file of the table "main_sequence" is not a regular file, so it cannot be read; expected a regular file, found a folder/,
  },
  {
    name: 'table-is-a-broken-link',
    rule: 'a table file is a readable regular file',
    edit: (dir) => {
      unlinkSync(join(dir, 'cepheids.ecsv'));
      symlinkSync(join(dir, 'moved-away.ecsv'), join(dir, 'cepheids.ecsv'));
    },
    ending: 'input error',
    message:
      /cepheids\.ecsv: the file of the table "cepheids" is not a regular file, so it cannot be read; expected a regular file, found a symbolic link to nothing/,
  },
  {
    name: 'blinding-record-of-another-release',
    rule: 'a blinding record belongs to a release that says it is blinded',
    edit: (dir) => cpSync(join(DEMO_RELEASES, '2026.4', 'blinding.json'), join(dir, 'blinding.json')),
    ending: 'input error',
    message: /blinding\.json: the release has a blinding record but release\.yaml says "blinded: false"/,
  },
  {
    name: 'editor-backup-beside-a-table',
    rule: 'hidden files and editor backups are ignored',
    edit: (dir) => {
      cpSync(join(dir, 'parallax.ecsv'), join(dir, 'parallax.ecsv~'));
      writeFileSync(join(dir, '.parallax.ecsv.swp'), 'not a table');
    },
    ending: 'ok',
    message: null,
  },
];
