/**
 * `rungbook recover` (issue 16), the three checks of the issue and the blinded case.
 * Kind: recovery by simulation (DEVELOPERS.md, kind 2) and statistics of the summary.
 *
 * 1. 200 seeds on demo release 2026.3: every number of the summary equals the one computed here,
 *    independently, from the seeds file (JSON Lines) as written.
 * 2. Shards 1/3, 2/3, 3/3 (one worker thread each), merged, give byte for byte the summary of one
 *    run of the same seeds on two worker threads.
 * 3. Errors halved in the simulation only (test hook): 1-sigma coverage far below its bound and a
 *    failing verdict.
 * 4. Blinded release 2026.4: the truth is the blinded fit; the true H0 (release unblinded with the
 *    public demo key) appears nowhere in the summary or the terminal output.
 *
 * Outside references: the unit normal's coverage, 2 Phi(1) - 1 = 0.682689492 and 2 Phi(2) - 1 =
 * 0.954499736, from Phi(1) = 0.8413447461 and Phi(2) = 0.9772498681 (Abramowitz & Stegun 1964,
 * Table 26.1). The standard errors are the textbook ones (sd/sqrt(n); sd/sqrt(2(n-1)) for a
 * Gaussian sample's SD, large n; sqrt(p(1-p)/n) for a binomial fraction), written out here again.
 */
import { cpSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { recoverRelease, releaseAndTruth } from '../../src/recover/run.ts';
import { headerLine, seedLineText, shardSeeds } from '../../src/recover/shard.ts';
import { normalCoverage, recoveryBounds, summarise, serializeSummary, type RecoverySummary } from '../../src/recover/summary.ts';
import { capture, hasNumberToken, tempDir, writeKeyFile } from '../blinding/helpers.ts';
import { REL_1E12, REL_1E9 } from '../tolerances.ts';

const RELEASES = join(import.meta.dirname, '../../content/releases');
const DEMO = join(RELEASES, '2026.3');
const BLINDED = join(RELEASES, '2026.4');
const DEMO_KEY = 'lantern-demo-key-NOT-SECRET-7c1f0e9a2b5d4863';
const CODE = 'test';

function close(actual: number, expected: number, rel = REL_1E12): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.max(1, Math.abs(expected)));
}

describe('the unit normal (reference values)', () => {
  it('gives the tabulated 1- and 2-sigma coverages', () => {
    // the table gives 10 decimals; our erf is accurate far beyond that
    close(normalCoverage(1), 2 * 0.8413447461 - 1, REL_1E9);
    close(normalCoverage(2), 2 * 0.9772498681 - 1, REL_1E9);
    // the coverage bounds are those of a Gaussian pull with SD 1.15 and 0.85: Phi(1/1.15) = Phi(0.8696),
    // Phi(1/0.85) = Phi(1.1765); A&S Table 26.1 interpolated: 0.8077 and 0.8803
    const b = recoveryBounds();
    expect(b.coverage1[0]).toBeCloseTo(2 * 0.8077 - 1, 3);
    expect(b.coverage1[1]).toBeCloseTo(2 * 0.8803 - 1, 3);
  });
});

describe('recover on demo release 2026.3, 200 seeds', () => {
  const tmp = tempDir('recover200');
  let summary: RecoverySummary;
  let seedsText: string;

  it('runs on two worker threads and writes one line per seed', async () => {
    const { header, lines } = await recoverRelease(DEMO, { seeds: 200, first: 1, shard: { k: 1, m: 1 }, workers: 2, codeVersion: CODE });
    seedsText = headerLine(header) + lines.map(seedLineText).join('');
    summary = JSON.parse(serializeSummary(summarise(header, lines))) as RecoverySummary;
    const rows = seedsText.trimEnd().split('\n');
    expect(rows).toHaveLength(201);
    expect(rows.slice(1).map((r) => JSON.parse(r).seed)).toEqual(shardSeeds(1, 200));
    expect(summary.seeds).toEqual({ first: 1, count: 200, calibrated: 200 - summary.seeds.failed, failed: summary.seeds.failed });
    expect(summary.quantities.map((q) => q.key)).toContain('H0');
    expect(summary.quantities.map((q) => q.key)).toContain('parameters.M_W');
    expect(summary.quantities.map((q) => q.key)).toContain('parameters.parallax_zero_point');
    void tmp;
  }, 600_000);

  it("has the summary's numbers equal to those computed here from the JSON Lines", () => {
    const rows = seedsText
      .trimEnd()
      .split('\n')
      .slice(1)
      .map((r) => JSON.parse(r));
    const b = summary.bounds;
    for (const q of summary.quantities) {
      // independent: collect pulls, recompute each pull from estimate, truth and error too
      const z: number[] = [];
      for (const r of rows) {
        const x = r.quantities?.[q.key];
        if (!x) continue;
        close(x.pull, (x.estimate - x.truth) / x.error);
        z.push(x.pull);
      }
      const n = z.length;
      expect(q.n).toBe(n);
      // mean and SD by a two-pass sum in reverse order (another order of additions than the code's)
      const mean = z.reduceRight((a, v) => a + v, 0) / n;
      const sd = Math.sqrt(z.reduceRight((a, v) => a + (v - mean) * (v - mean), 0) / (n - 1));
      const c1 = z.filter((v) => v >= -1 && v <= 1).length / n;
      const c2 = z.filter((v) => v >= -2 && v <= 2).length / n;
      close(q.mean.value, mean);
      close(q.mean.se, sd / Math.sqrt(n));
      close(q.sd.value, sd);
      close(q.sd.se, sd / Math.sqrt(2 * (n - 1)));
      expect(q.coverage1.value).toBe(c1);
      expect(q.coverage2.value).toBe(c2);
      close(q.coverage1.se, Math.sqrt((c1 * (1 - c1)) / n));
      close(q.coverage2.se, Math.sqrt((c2 * (1 - c2)) / n));
      // verdicts: fail when the +-2 se interval is wholly outside the bounds, inconclusive when wider than them
      const verdict = (v: number, se: number, [lo, hi]: number[]) =>
        v + 2 * se < lo! || v - 2 * se > hi! ? 'fail' : 4 * se > hi! - lo! ? 'inconclusive' : 'pass';
      expect(q.mean.verdict).toBe(verdict(mean, sd / Math.sqrt(n), b.mean));
      expect(q.sd.verdict).toBe(verdict(sd, sd / Math.sqrt(2 * (n - 1)), b.sd));
      const nominalSe = (p: number) => Math.sqrt((p * (1 - p)) / n);
      expect(q.coverage1.verdict).toBe(verdict(c1, Math.max(nominalSe(c1), nominalSe(0.682689492)), b.coverage1));
      expect(q.coverage2.verdict).toBe(verdict(c2, Math.max(nominalSe(c2), nominalSe(0.954499736)), b.coverage2));
      const all = [q.mean.verdict, q.sd.verdict, q.coverage1.verdict, q.coverage2.verdict];
      // below 20 seeds every quantity is inconclusive (large-sample standard errors)
      expect(q.verdict).toBe(n < 20 ? 'inconclusive' : all.includes('fail') ? 'fail' : all.includes('inconclusive') ? 'inconclusive' : 'pass');
    }
    const anyFail = summary.quantities.some((q) => q.verdict === 'fail') || summary.seeds.failed > 0;
    const anyUnclear = summary.quantities.some((q) => q.verdict === 'inconclusive');
    expect(summary.verdict).toBe(anyFail ? 'fail' : anyUnclear ? 'inconclusive' : 'pass');
  });

  it('recovers H0 and the Cepheid zero point without bias and with honest errors', () => {
    // The headline quantities must pass or be inconclusive (never fail) on the model's own data;
    // bounds from 200 seeds: the SE of the mean pull is 1/sqrt(200) = 0.071, so |mean| < 0.2 + 2 x 0.071.
    for (const key of ['H0', 'parameters.M_W', 'parameters.M_B', 'parameters.a_B']) {
      const q = summary.quantities.find((x) => x.key === key)!;
      expect(Math.abs(q.mean.value)).toBeLessThan(0.2 + 2 / Math.sqrt(200));
      expect(q.sd.value).toBeGreaterThan(0.85 - 2 / Math.sqrt(2 * 199));
      expect(q.sd.value).toBeLessThan(1.15 + (2 * 1.15) / Math.sqrt(2 * 199));
      expect(q.verdict).not.toBe('fail');
    }
  });
});

describe('shards', () => {
  const tmp = tempDir('recover-shards');

  it('1/3, 2/3 and 3/3 merged give exactly the summary of one run of the same seeds', async () => {
    const shardFiles: string[] = [];
    for (const k of [1, 2, 3]) {
      const out = join(tmp, `s${k}.jsonl`);
      const c = capture();
      expect(await main(['recover', DEMO, '--seeds', '10', '--first', '41', '--shard', `${k}/3`, '--workers', '1', '--out', out], c.io)).toBe(0);
      shardFiles.push(out);
    }
    // the slices are disjoint and together complete
    const seedsOf = (f: string) =>
      readFileSync(f, 'utf8')
        .trimEnd()
        .split('\n')
        .slice(1)
        .map((r) => JSON.parse(r).seed as number);
    const all = shardFiles.flatMap(seedsOf);
    expect(all).toEqual(Array.from({ length: 10 }, (_, i) => 41 + i));
    const merged = join(tmp, 'merged.json');
    const m = capture();
    const mergeCode = await main(['recover', '--merge', shardFiles[2]!, shardFiles[0]!, shardFiles[1]!, '--summary', merged], m.io);
    const one = join(tmp, 'one.json');
    const o = capture();
    const oneCode = await main(['recover', DEMO, '--seeds', '10', '--first', '41', '--workers', '2', '--out', join(tmp, 'one.jsonl'), '--summary', one], o.io);
    expect(mergeCode).toBe(oneCode);
    expect(readFileSync(merged, 'utf8')).toBe(readFileSync(one, 'utf8'));
    // and the seed lines are the same bytes wherever they ran
    const body = (f: string) => readFileSync(f, 'utf8').split('\n').slice(1).join('\n');
    expect(shardFiles.map(body).join('')).toBe(body(join(tmp, 'one.jsonl')));
  }, 600_000);

  it('refuses a merge with a missing or repeated shard, naming the file', async () => {
    const files = [1, 2, 3].map((k) => join(tmp, `s${k}.jsonl`));
    const c = capture();
    expect(await main(['recover', '--merge', files[0]!, files[1]!, '--summary', join(tmp, 'x.json')], c.io)).toBe(1);
    expect(c.err()).toContain('no file for shard 3/3');
    const d = capture();
    expect(await main(['recover', '--merge', files[0]!, files[0]!, files[1]!, files[2]!, '--summary', join(tmp, 'x.json')], d.io)).toBe(1);
    expect(d.err()).toContain(`${files[0]}:1`);
    expect(d.err()).toContain('given twice');
  });
});

describe('errors halved in the simulation only (test hook)', () => {
  it('gives 1-sigma coverage far below the bound and a failing verdict', async () => {
    // The H-band errors of the Cepheids are stated at half the size the noise was drawn with.
    // The fit's intrinsic scatter takes up the missing variance (so distances stay nearly honest),
    // and the recovery shows exactly that: the intrinsic scatter is then far from its truth.
    const { header, lines } = await recoverRelease(DEMO, {
      seeds: 24,
      first: 1001,
      shard: { k: 1, m: 1 },
      workers: 2,
      codeVersion: CODE,
      simulate: { statedErrorFactor: { m_h_err: 0.5 } },
    });
    const s = summarise(header, lines);
    expect(s.verdict).toBe('fail');
    const q = s.quantities.find((x) => x.key === 'parameters.sigma_int_cepheid')!;
    // even with the binomial SE of an honest 68 % coverage over 24 seeds (0.095), far below the bound
    expect(q.coverage1.value + 2 * Math.sqrt((0.682689492 * (1 - 0.682689492)) / 24)).toBeLessThan(s.bounds.coverage1[0]);
    expect(q.mean.value).toBeGreaterThan(3);
    expect(q.verdict).toBe('fail');
    expect(s.verdict_reason).toContain('parameters.sigma_int_cepheid');
  }, 600_000);
});

describe('a blinded release', () => {
  const tmp = tempDir('recover-blinded');

  it('takes the blinded fit as the truth and shows no true H0', async () => {
    const { truthResults } = releaseAndTruth(BLINDED, CODE);
    expect(truthResults.blinded).toBe(true);
    const { header, lines } = await recoverRelease(BLINDED, { seeds: 4, first: 1, shard: { k: 1, m: 1 }, workers: 0, codeVersion: CODE });
    const first = lines.find((l) => 'quantities' in l) as Extract<(typeof lines)[number], { quantities: unknown }>;
    close(first.quantities.H0!.truth, truthResults.h0!.value, REL_1E9);
    const summary = summarise(header, lines);
    expect(summary.truth).toContain('blinded fit');

    // the true H0: the same release unblinded with the public demo key
    const copy = join(tmp, '2026.4');
    cpSync(BLINDED, copy, { recursive: true });
    const u = capture();
    expect(await main(['unblind', copy, '--by', 'Test', '--key-file', writeKeyFile(tmp, 'k.txt', DEMO_KEY), '--date', '2027-01-01'], u.io)).toBe(0);
    const trueH0 = releaseAndTruth(copy, CODE).truthResults.h0!.value;
    expect(Math.abs(trueH0 - truthResults.h0!.value)).toBeGreaterThan(1);

    const out = join(tmp, 'summary.json');
    const c = capture();
    await main(['recover', BLINDED, '--seeds', '4', '--workers', '0', '--out', join(tmp, 's.jsonl'), '--summary', out], c.io);
    const texts = [readFileSync(out, 'utf8'), c.out(), c.err()];
    for (const d of [1, 2, 3, 4]) {
      for (const t of texts) expect(hasNumberToken(t, trueH0.toFixed(d))).toBe(false);
    }
    // the summary holds pulls and coverages only: no value of H0 at all, blinded or not
    expect(hasNumberToken(texts[0]!, truthResults.h0!.value.toFixed(2))).toBe(false);
  }, 600_000);
});
