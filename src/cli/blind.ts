/**
 * `rungbook blind <release-dir> [--out DIR] [--id BLINDING_ID] [--key-file FILE] [--date YYYY-MM-DD]`
 * `rungbook unblind <release-dir> --by NAME [--key-file FILE] [--date YYYY-MM-DD]`
 *
 * The key comes from --key-file or RUNGBOOK_BLINDING_KEY (src/blinding/key.ts). The date
 * defaults to today (UTC); it is written into blinding.json only, never into results.json.
 */
import { resolve } from 'node:path';
import { blindReleaseFolder } from '../blinding/blindFolder.ts';
import { readBlindingKey } from '../blinding/key.ts';
import { OFFSET_MAX_ABS_UNITS, h0Factor, offsetText } from '../blinding/scheme.ts';
import { unitsOfOffsetMag } from '../blinding/scheme.ts';
import { unblindReleaseDir } from '../blinding/unblind.ts';
import { parseArgs, UsageError, type CliIO } from './output.ts';

/** Blinding id used when --id is not given: releases blinded with one key and this id share one offset. */
export const DEFAULT_BLINDING_ID = 'main';

function today(): string {
  return new Date().toISOString().slice(0, 10);
}

const f3 = (x: number) => x.toFixed(3);

export async function runBlind(args: string[], io: CliIO, env: NodeJS.ProcessEnv = process.env): Promise<number> {
  const { positional, values } = parseArgs(args, { values: ['out', 'id', 'key-file', 'date'] });
  if (positional.length !== 1) {
    throw new UsageError('usage: rungbook blind <release-dir> [--out DIR] [--id BLINDING_ID] [--key-file FILE] [--date YYYY-MM-DD]');
  }
  const dir = positional[0]!;
  const guarded = [dir, ...(values.out !== undefined ? [values.out] : [])];
  const key = readBlindingKey(values['key-file'], env, guarded);
  for (const n of key.notes) io.stderr(`rungbook blind: note: ${n}\n`);
  const result = blindReleaseFolder(dir, key.key, { out: values.out, blindingId: values.id ?? DEFAULT_BLINDING_ID, date: values.date ?? today() });
  for (const n of result.notes) io.stderr(`rungbook blind: note: ${n}\n`);
  const r = result.record;
  const lo = h0Factor(-OFFSET_MAX_ABS_UNITS);
  const hi = h0Factor(OFFSET_MAX_ABS_UNITS);
  io.stdout(
    [
      `Blinded release in ${result.dir} (key from ${key.source}).`,
      `  ${r.rows} Hubble-flow magnitudes (${r.table}, column m_b) now carry one hidden offset; release.yaml says "blinded: true".`,
      `  blinding id: ${r.blinding_id}   commitment: ${r.commitment}`,
      `  H0 from this release is multiplied by an unknown factor between ${f3(lo)} and ${f3(hi)}`,
      `  (every value in that range equally likely, 1 included); every other result is unchanged.`,
      '  Neither the offset nor the key nor the salt was written anywhere. Keep the key outside the repository,',
      '  and the unblinded magnitudes out of the analysis area until the release is unblinded.',
      '',
    ].join('\n'),
  );
  return 0;
}

export async function runUnblind(args: string[], io: CliIO, env: NodeJS.ProcessEnv = process.env): Promise<number> {
  const { positional, values } = parseArgs(args, { values: ['by', 'key-file', 'date'] });
  if (positional.length !== 1 || values.by === undefined) {
    throw new UsageError('usage: rungbook unblind <release-dir> --by NAME [--key-file FILE] [--date YYYY-MM-DD]');
  }
  const dir = positional[0]!;
  const key = readBlindingKey(values['key-file'], env, [dir]);
  for (const n of key.notes) io.stderr(`rungbook unblind: note: ${n}\n`);
  const record = unblindReleaseDir(dir, key.key, { by: values.by, date: values.date ?? today() });
  const u = record.unblinded!;
  const units = unitsOfOffsetMag(u.offset_mag)!;
  io.stdout(
    [
      `Unblinded ${resolve(dir)} on ${u.date} by ${u.by}: the key matches and the commitment is verified.`,
      `  offset ${units >= 0 ? '+' : ''}${offsetText(units)} mag (blinded H0 = true H0 x ${h0Factor(units).toFixed(5)}), recorded in blinding.json with the salt.`,
      '  `rungbook calibrate` now reports the true values of this release.',
      `  Every release blinded with this key and blinding id "${record.blinding_id}" carries the same offset, which is now public:`,
      '  blind new data with a new blinding id.',
      '',
    ].join('\n'),
  );
  return 0;
}
