// `rungbook blind`, `calibrate` and `unblind` on generated releases, run as a user runs
// them (in-process through main()). Kind: pipeline checks of the promises of the blinding
// scheme (content/methods/blinding.md): only H0 moves, by exactly 10^(offset/5); the offset
// is written nowhere; unblinding restores the never-blinded results exactly; releases blinded
// alike keep their true H0 ratio; a wrong key changes nothing.
import { cpSync, mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { compareH0Blinding, sameBlinding } from '../../src/blinding/compare.ts';
import { readBlindingRecord, type BlindingRecord } from '../../src/blinding/record.ts';
import { deriveOffsetUnits, deriveSalt, h0Factor, offsetMag, offsetText } from '../../src/blinding/scheme.ts';
import { columnCells } from '../../src/blinding/tableText.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { main } from '../../src/cli/main.ts';
import { writeGeneratedRelease } from '../../src/demo/index.ts';
import { InputError } from '../../src/types/issues.ts';
import type { Results } from '../../src/types/results.ts';
import { FIT_REPEAT_REL, MAG_1E9, relErr } from '../tolerances.ts';
import { capture, folderHash, hasNumberToken, OTHER_KEY, TEST_KEY, tempDir, writeKeyFile } from './helpers.ts';

const ID = 'season-t';
const units = deriveOffsetUnits(Buffer.from(TEST_KEY), ID);
const delta = offsetMag(units);
const factor = h0Factor(units);

const root = tempDir('blind-pipeline');
const keys = tempDir('blind-keys');
const keyFile = writeKeyFile(keys, 'key.txt', TEST_KEY);
const wrongKeyFile = writeKeyFile(keys, 'wrong.txt', OTHER_KEY);

/** A generated release (no truth file), written under root/<group>/<id>. */
function generate(group: string, id: string, hubbleFlowCount?: number, withVariant = false): string {
  return writeGeneratedRelease(join(root, group), id, {
    seed: 31,
    scale: 0.5,
    variants: withVariant ? [{ name: 'z_min 0.01', z_min: 0.01 }] : [],
    hubbleFlowCount,
    writeTruth: false,
  }).dir;
}

function copy(dir: string, group: string): string {
  const to = join(root, group, dir.split('/').pop()!);
  mkdirSync(join(root, group), { recursive: true });
  cpSync(dir, to, { recursive: true });
  return to;
}

async function run(args: string[]) {
  const c = capture();
  const code = await main(args, c.io);
  return { code, out: c.out(), err: c.err() };
}

/** Results without the parts that name files and the blinding record. */
function analysisPart(r: Results): Omit<Results, 'provenance' | 'unblinding' | 'blinding' | 'blinded'> {
  const { provenance: _p, unblinding: _u, blinding: _b, blinded: _bl, ...rest } = r;
  return rest;
}

let plain: string;
let blinded: string;
let blindOutput: { code: number; out: string; err: string };
let rPlain: Results;
let rBlind: Results;

beforeAll(async () => {
  plain = generate('plain', 'r1', undefined, true);
  blinded = copy(plain, 'blinded');
  blindOutput = await run(['blind', blinded, '--key-file', keyFile, '--id', ID, '--date', '2026-03-01']);
  rPlain = await calibrateReleaseDir(plain);
  rBlind = await calibrateReleaseDir(blinded);
});

describe('blinding a release', () => {
  it('exits 0, marks release.yaml and writes blinding.json with a commitment', () => {
    expect(blindOutput.code, blindOutput.err).toBe(0);
    expect(readFileSync(join(blinded, 'release.yaml'), 'utf8')).toBe(
      readFileSync(join(plain, 'release.yaml'), 'utf8').replace('blinded: false', 'blinded: true'),
    );
    const record = readBlindingRecord(blinded)!;
    expect(record.blinding_id).toBe(ID);
    expect(record.rows).toBe(125);
    expect(record.blinded_on).toBe('2026-03-01');
    expect(record.unblinded).toBeNull();
    expect(record.commitment).toMatch(/^[0-9a-f]{64}$/);
  });

  it('writes the offset, the salt and the key nowhere (files and messages)', () => {
    const forms = [offsetText(units), offsetText(-units), String(delta), String(-delta), String(Math.abs(units))];
    const record = readFileSync(join(blinded, 'blinding.json'), 'utf8');
    for (const f of forms) expect(hasNumberToken(record, f), `blinding.json holds ${f}`).toBe(false);
    for (const f of forms.slice(0, 4)) expect(hasNumberToken(blindOutput.out + blindOutput.err, f), `message holds ${f}`).toBe(false);
    const salt = deriveSalt(Buffer.from(TEST_KEY), ID).toString('hex');
    for (const name of readdirSync(blinded)) {
      const text = readFileSync(join(blinded, name), 'utf8');
      expect(text.includes(salt), `${name} holds the salt`).toBe(false);
      expect(text.includes(TEST_KEY), `${name} holds the key`).toBe(false);
    }
    // Every other file is the original, byte for byte, and the table differs only in m_b cells.
    for (const name of readdirSync(plain)) {
      if (name === 'release.yaml' || name === 'sn_hubble_flow.ecsv') continue;
      expect(readFileSync(join(blinded, name), 'utf8'), name).toBe(readFileSync(join(plain, name), 'utf8'));
    }
    const before = readFileSync(join(plain, 'sn_hubble_flow.ecsv'), 'utf8');
    const after = readFileSync(join(blinded, 'sn_hubble_flow.ecsv'), 'utf8');
    const a = columnCells(before, 'ecsv', 'm_b');
    const b = columnCells(after, 'ecsv', 'm_b');
    let rebuilt = after;
    for (let i = b.length - 1; i >= 0; i--) rebuilt = rebuilt.slice(0, b[i]!.start) + a[i]!.text + rebuilt.slice(b[i]!.end);
    expect(rebuilt).toBe(before);
    expect(readdirSync(blinded).sort()).toEqual([...readdirSync(plain), 'blinding.json'].sort());
  });

  it('moves H0 by exactly 10^(offset/5) and leaves the rest of the ladder alone', () => {
    expect(rBlind.blinded).toBe(true);
    expect(rPlain.blinded).toBe(false);
    // Both fits iterate to the convergence limits of src/ladder/globalFit.ts (far below the errors),
    // so the ratio holds to the fit's repeatability, not to rounding.
    expect(relErr(rBlind.h0!.value, rPlain.h0!.value * factor)).toBeLessThan(FIT_REPEAT_REL);
    expect(relErr(rBlind.h0!.stat, rPlain.h0!.stat * factor)).toBeLessThan(FIT_REPEAT_REL);
    expect(relErr(rBlind.variants[0]!.h0!, rPlain.variants[0]!.h0! * factor)).toBeLessThan(FIT_REPEAT_REL);
    // a_B absorbs the offset: m_b -> m_b - delta gives a_B -> a_B + delta/5.
    expect(Math.abs(rBlind.parameters.a_B!.value - (rPlain.parameters.a_B!.value + delta / 5))).toBeLessThan(MAG_1E9);
    expect(rBlind.parameters.a_B!.blinded).toBe(true);
    expect(rBlind.parameters.M_B!.blinded).toBe(true);
    for (const name of ['M_W', 'b_W', 'Z_W', 'M_B', 'alpha', 'beta', 'sigma_int_cepheid', 'sigma_int_sn', 'parallax_zero_point']) {
      expect(relErr(rBlind.parameters[name]!.value, rPlain.parameters[name]!.value), name).toBeLessThan(FIT_REPEAT_REL);
      expect(relErr(rBlind.parameters[name]!.err, rPlain.parameters[name]!.err), `${name} err`).toBeLessThan(FIT_REPEAT_REL);
    }
    rPlain.systems.forEach((s, i) => {
      const t = rBlind.systems[i]!;
      expect(t.id).toBe(s.id);
      if (s.mu === null) expect(t.mu).toBeNull();
      else expect(Math.abs(t.mu! - s.mu), s.id).toBeLessThan(MAG_1E9);
    });
    expect(rBlind.rejected.map(({ residual_sigma: _, membership: __, ...where }) => where)).toEqual(
      rPlain.rejected.map(({ residual_sigma: _, membership: __, ...where }) => where),
    );
    rPlain.rejected.forEach((x, i) => expect(relErr(rBlind.rejected[i]!.residual_sigma, x.residual_sigma)).toBeLessThan(FIT_REPEAT_REL));
    // a probable blend's core membership is a fitted number too: the same to the fit's repeatability
    rPlain.rejected.forEach((x, i) => expect(Math.abs((rBlind.rejected[i]!.membership ?? 0) - (x.membership ?? 0))).toBeLessThan(FIT_REPEAT_REL));
    expect(relErr(rBlind.fit.chi2, rPlain.fit.chi2)).toBeLessThan(FIT_REPEAT_REL);
    expect(rBlind.fit.dof).toBe(rPlain.fit.dof);
    rPlain.budget.forEach((b, i) => expect(relErr(rBlind.budget[i]!.fraction, b.fraction), b.source).toBeLessThan(FIT_REPEAT_REL));
  });

  it('says BLINDED in the summary of `rungbook calibrate`', async () => {
    const { code, out } = await run(['calibrate', blinded, '--json', join(root, 'blind.json')]);
    expect(code).toBe(0);
    expect(out).toMatch(/^BLINDED: H0, the intercept a_B and the H0 of every variant carry a hidden offset/m);
    expect(out).toMatch(/H0 = .*\[BLINDED/);
    expect(out).toMatch(/a_B .*\(BLINDED\)/);
    const json = JSON.parse(readFileSync(join(root, 'blind.json'), 'utf8')) as Results;
    expect(json.blinded).toBe(true);
    expect(json.unblinding).toBeNull();
    expect(json.blinding).toEqual({ blinding_id: ID, key_check: readBlindingRecord(blinded)!.key_check, commitment: readBlindingRecord(blinded)!.commitment });
  });

  it('refuses to blind a release twice', async () => {
    const hash = folderHash(blinded);
    const r = await run(['blind', blinded, '--key-file', keyFile, '--id', ID, '--date', '2026-03-02']);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/already says "blinded: true"/);
    expect(folderHash(blinded)).toBe(hash);
  });
});

describe('unblinding', () => {
  let unblinded: string;
  beforeAll(() => {
    unblinded = copy(blinded, 'unblinded');
  });

  it('a wrong key fails with a clear message, exit 1, and changes nothing', async () => {
    const hash = folderHash(unblinded);
    const r = await run(['unblind', unblinded, '--by', 'Quill Marsh', '--key-file', wrongKeyFile, '--date', '2026-04-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('this key is not the key the release was blinded with');
    expect(r.err).toContain('nothing was changed');
    expect(folderHash(unblinded)).toBe(hash);
  });

  it('a record altered by hand is refused even with the right key, and nothing changes', async () => {
    const tampered = copy(blinded, 'tampered');
    const path = join(tampered, 'blinding.json');
    const record = JSON.parse(readFileSync(path, 'utf8')) as BlindingRecord;
    writeFileSync(path, JSON.stringify({ ...record, commitment: record.commitment.replace(/^./, (c) => (c === '0' ? '1' : '0')) }, null, 2) + '\n');
    const hash = folderHash(tampered);
    const r = await run(['unblind', tampered, '--by', 'Quill Marsh', '--key-file', keyFile, '--date', '2026-04-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('the record was altered');
    expect(folderHash(tampered)).toBe(hash);
  });

  it('the right key records who, when, the offset and the salt; calibrate then gives the never-blinded results exactly', async () => {
    const r = await run(['unblind', unblinded, '--by', 'Quill Marsh', '--key-file', keyFile, '--date', '2026-04-01']);
    expect(r.code, r.err).toBe(0);
    const record = readBlindingRecord(unblinded)!;
    expect(record.unblinded).toEqual({ by: 'Quill Marsh', date: '2026-04-01', offset_mag: delta, salt: deriveSalt(Buffer.from(TEST_KEY), ID).toString('hex') });
    // Only blinding.json changed; the table and release.yaml keep their blinded form.
    for (const name of readdirSync(blinded)) {
      if (name !== 'blinding.json') expect(readFileSync(join(unblinded, name), 'utf8'), name).toBe(readFileSync(join(blinded, name), 'utf8'));
    }
    const rUnblind = await calibrateReleaseDir(unblinded);
    expect(rUnblind.blinded).toBe(false);
    expect(rUnblind.unblinding).toEqual({ by: 'Quill Marsh', date: '2026-04-01', offset_mag: delta });
    expect(analysisPart(rUnblind)).toEqual(analysisPart(rPlain));
    expect(rUnblind.h0!.value).toBe(rPlain.h0!.value);
    expect(rUnblind.rungs.supernovae.hubble_flow.map((s) => s.m_b)).toEqual(rPlain.rungs.supernovae.hubble_flow.map((s) => s.m_b));
    const { out } = await run(['calibrate', unblinded, '--json', join(root, 'unblinded.json')]);
    expect(out).toContain('Unblinded on 2026-04-01 by Quill Marsh');
    expect(out).not.toContain('BLINDED');
  });

  it('unblinding twice is refused', async () => {
    const hash = folderHash(unblinded);
    const r = await run(['unblind', unblinded, '--by', 'Someone Else', '--key-file', keyFile, '--date', '2026-04-02']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('already unblinded on 2026-04-01 by Quill Marsh');
    expect(folderHash(unblinded)).toBe(hash);
  });

  it('a recorded offset edited by hand, or "blinded: false" set by hand, stops the calibration', async () => {
    const edited = copy(unblinded, 'edited-offset');
    const path = join(edited, 'blinding.json');
    const record = JSON.parse(readFileSync(path, 'utf8')) as BlindingRecord;
    writeFileSync(
      path,
      JSON.stringify({ ...record, unblinded: { ...record.unblinded!, offset_mag: offsetMag(units + (units > 0 ? -1 : 1)) } }, null, 2) + '\n',
    );
    await expect(calibrateReleaseDir(edited)).rejects.toThrow(InputError);
    await expect(calibrateReleaseDir(edited)).rejects.toThrow(/do not match the commitment/);

    const flipped = copy(blinded, 'flipped');
    writeFileSync(join(flipped, 'release.yaml'), readFileSync(join(flipped, 'release.yaml'), 'utf8').replace('blinded: true', 'blinded: false'));
    const r = await run(['calibrate', flipped, '--json', join(root, 'flipped.json')]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/blinding\.json.*blinded: false/);
  });

  it('blinding new data with a key and id whose offset was made public is refused', async () => {
    const fresh = generate('fresh', 'r9');
    const target = join(root, 'unblinded', 'r9');
    const r = await run(['blind', fresh, '--out', target, '--key-file', keyFile, '--id', ID, '--date', '2026-05-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('its offset is public');
    expect(readdirSync(join(root, 'unblinded')).filter((n) => !n.startsWith('.'))).toEqual(['r1']);
  });
});

describe('two releases blinded with the same key and blinding id', () => {
  it('keep the true H0 ratio; the comparison says so; another id gives another offset', async () => {
    const plainB = generate('plainB', 'r2', 100);
    const outB = join(root, 'blindedB', 'r2');
    const hashB = folderHash(plainB);
    const r = await run(['blind', plainB, '--out', outB, '--key-file', keyFile, '--id', ID, '--date', '2026-03-05']);
    expect(r.code, r.err).toBe(0);
    expect(folderHash(plainB)).toBe(hashB); // --out leaves the source alone

    const outC = join(root, 'blindedC', 'r2');
    expect((await run(['blind', plainB, '--out', outC, '--key-file', keyFile, '--id', 'season-u', '--date', '2026-03-05'])).code).toBe(0);
    expect(deriveOffsetUnits(Buffer.from(TEST_KEY), 'season-u')).not.toBe(units);

    const [rPlainB, rBlindB, rBlindC] = await Promise.all([calibrateReleaseDir(plainB), calibrateReleaseDir(outB), calibrateReleaseDir(outC)]);
    const trueRatio = rPlainB.h0!.value / rPlain.h0!.value;
    expect(Math.abs(trueRatio - 1)).toBeGreaterThan(1e-4); // the two releases do differ
    // Each blinded H0 repeats its unblinded value only to the fit's repeatability (FIT_REPEAT_REL,
    // as asserted above: the iterative fit, the Cepheid blend mixture's EM included, stops at its own
    // convergence limits on data that differ by round-off), so the ratio is good to twice that.
    expect(relErr(rBlindB.h0!.value / rBlind.h0!.value, trueRatio)).toBeLessThan(2 * FIT_REPEAT_REL);
    const trueShift = rPlainB.h0!.value - rPlain.h0!.value;
    // The shift is a difference of two values each good to FIT_REPEAT_REL: compare it on H0's scale.
    expect(Math.abs(rBlindB.h0!.value - rBlind.h0!.value - trueShift * factor) / rPlain.h0!.value).toBeLessThan(2 * FIT_REPEAT_REL);

    expect(sameBlinding(readBlindingRecord(blinded), readBlindingRecord(outB))).toBe(true);
    expect(sameBlinding(rBlind.blinding, rBlindB.blinding)).toBe(true);
    expect(compareH0Blinding(rBlind, rBlindB).meaning).toBe('same-offset');
    expect(compareH0Blinding(rBlind, rBlindB).message).toContain('BLINDED with the same hidden offset');

    expect(sameBlinding(readBlindingRecord(blinded), readBlindingRecord(outC))).toBe(false);
    expect(compareH0Blinding(rBlind, rBlindC).meaning).toBe('different-offsets');
    expect(relErr(rBlindC.h0!.value / rBlind.h0!.value, trueRatio)).toBeGreaterThan(1e-3);
    expect(compareH0Blinding(rPlain, rBlindB).meaning).toBe('one-blinded');
    expect(compareH0Blinding(rPlain, rPlainB).meaning).toBe('true-values');
  });
});

describe('where the key may come from', () => {
  it('a key file inside the repository holding the release is refused', async () => {
    const repo = join(root, 'repo');
    mkdirSync(join(repo, '.git'), { recursive: true });
    const rel = copy(plain, 'repo');
    const inside = writeKeyFile(repo, 'key.txt', TEST_KEY);
    const hash = folderHash(rel);
    const r = await run(['blind', rel, '--key-file', inside, '--id', ID, '--date', '2026-03-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('inside the repository');
    expect(folderHash(rel)).toBe(hash);
  });

  it('a release tracked by Git is not blinded in place', async () => {
    const repo = join(root, 'gitrepo');
    mkdirSync(repo, { recursive: true });
    const rel = join(repo, 'r1');
    cpSync(plain, rel, { recursive: true });
    const { execFileSync } = await import('node:child_process');
    execFileSync('git', ['init', '-q', repo]);
    execFileSync('git', ['-C', repo, 'add', 'r1']);
    const hash = folderHash(rel);
    const r = await run(['blind', rel, '--key-file', keyFile, '--id', ID, '--date', '2026-03-01']);
    expect(r.code).toBe(1);
    expect(r.err).toContain('already committed');
    expect(folderHash(rel)).toBe(hash);
  });

  it('the key may come from RUNGBOOK_BLINDING_KEY', async () => {
    const saved = process.env.RUNGBOOK_BLINDING_KEY;
    process.env.RUNGBOOK_BLINDING_KEY = `${TEST_KEY}\n`;
    try {
      const out = join(root, 'from-env', 'r1');
      const r = await run(['blind', plain, '--out', out, '--id', 'season-env', '--date', '2026-03-01']);
      expect(r.code, r.err).toBe(0);
      expect(r.out).toContain('key from RUNGBOOK_BLINDING_KEY');
      expect(readBlindingRecord(out)!.key_check).toBe(readBlindingRecord(blinded)!.key_check);
    } finally {
      if (saved === undefined) delete process.env.RUNGBOOK_BLINDING_KEY;
      else process.env.RUNGBOOK_BLINDING_KEY = saved;
    }
  });

  it('no key at all, or a short one, is a clear error', async () => {
    const saved = process.env.RUNGBOOK_BLINDING_KEY;
    delete process.env.RUNGBOOK_BLINDING_KEY;
    try {
      const r = await run(['unblind', blinded, '--by', 'X Y']);
      expect(r.code).toBe(1);
      expect(r.err).toContain('no blinding key: give --key-file FILE or set RUNGBOOK_BLINDING_KEY');
      const short = writeKeyFile(keys, 'short.txt', 'abc');
      const s = await run(['unblind', blinded, '--by', 'X Y', '--key-file', short]);
      expect(s.code).toBe(1);
      expect(s.err).toContain('too short');
    } finally {
      if (saved !== undefined) process.env.RUNGBOOK_BLINDING_KEY = saved;
    }
  });
});
