// A release blinded with the first scheme (offset 0.05 <= |offset| <= 0.25 mag, before zero was
// a possible offset) is still read, calibrated blinded, and unblinded with its key to the true
// results. The fixture is the demo release 2026.4 as the first scheme blinded it (its
// blinding.json and Hubble-flow table, committed before the scheme changed); every other file
// is today's 2026.4, which carries the same data. Kind: pipeline check on committed data.
import { cpSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { readBlindingRecord } from '../../src/blinding/record.ts';
import { deriveOffsetUnits, deriveOffsetUnitsV1, h0Factor, offsetMag } from '../../src/blinding/scheme.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { main } from '../../src/cli/main.ts';
import { DEMO_BLINDING } from '../../src/demo/index.ts';
import { REL_1E9, relErr } from '../tolerances.ts';
import { capture, tempDir, writeKeyFile } from './helpers.ts';

const DEMO_KEY = 'lantern-demo-key-NOT-SECRET-7c1f0e9a2b5d4863';
const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const tmp = tempDir('blind-legacy');

describe('a release blinded with the first scheme', () => {
  it('is read, calibrated blinded, and unblinded by its key to the results of the current blinding unblinded', async () => {
    const legacy = join(tmp, 'v1', '2026.4');
    cpSync(join(ROOT, 'content', 'releases', '2026.4'), legacy, { recursive: true });
    for (const f of ['blinding.json', 'sn_hubble_flow.ecsv']) cpSync(join(ROOT, 'tests', 'fixtures', 'blinding-v1', f), join(legacy, f));
    const record = readBlindingRecord(legacy)!;
    expect(record.scheme.offset_min_abs_mag).toBe(0.05);
    const v1 = deriveOffsetUnitsV1(Buffer.from(DEMO_KEY), DEMO_BLINDING.blindingId);
    // the first scheme's offset differs from the current one's for the same key and id
    expect(v1).not.toBe(deriveOffsetUnits(Buffer.from(DEMO_KEY), DEMO_BLINDING.blindingId));
    expect(Math.abs(v1)).toBeGreaterThanOrEqual(500);

    const current = join(tmp, 'v2', '2026.4');
    cpSync(join(ROOT, 'content', 'releases', '2026.4'), current, { recursive: true });
    const blindedV1 = await calibrateReleaseDir(legacy);
    const blindedV2 = await calibrateReleaseDir(current);
    expect(blindedV1.blinded).toBe(true);
    // both hide the same true H0 behind their own factor
    const units2 = deriveOffsetUnits(Buffer.from(DEMO_KEY), DEMO_BLINDING.blindingId);
    expect(relErr(blindedV1.h0!.value / h0Factor(v1), blindedV2.h0!.value / h0Factor(units2))).toBeLessThan(REL_1E9);

    const keyFile = writeKeyFile(tmp, 'demo-key.txt', DEMO_KEY);
    for (const dir of [legacy, current]) {
      const c = capture();
      const code = await main(['unblind', dir, '--by', 'Demo Reader', '--key-file', keyFile, '--date', '2027-01-15'], c.io);
      expect(code, c.err()).toBe(0);
    }
    expect(readBlindingRecord(legacy)!.unblinded!.offset_mag).toBe(offsetMag(v1));
    const [a, b] = await Promise.all([calibrateReleaseDir(legacy), calibrateReleaseDir(current)]);
    expect(a.blinded).toBe(false);
    expect(relErr(a.h0!.value, b.h0!.value)).toBeLessThan(REL_1E9);
    expect(a.parameters.a_B!.value).toBeCloseTo(b.parameters.a_B!.value, 12);
  }, 120_000);
});
