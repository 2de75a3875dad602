// The systematic budget (src/ladder/budget.ts, src/ladder/variants.ts): a source per analysis
// choice, half the full range of its alternatives (baseline included), sources in quadrature,
// data-changing variants reduced by the noise of their own change; and the R_V variant
// carrying R_V to the Wesenheit coefficient through the CCM89 law.
// Kind: unit tests with hand-computed values, a reference check against the published
// extinction law (Cardelli, Clayton & Mathis 1989, ApJ 345, 245, eqs. 1-3) worked by hand,
// and a pipeline check on the committed demo release 2026.3.
import { describe, expect, it } from 'vitest';
import { halfRange, systematicError, systematicSources } from '../../src/ladder/budget.ts';
import { changesData, netShift, sourceOfVariant, variantAnalysis } from '../../src/ladder/variants.ts';
import { wesenheitCoefficient, wesenheitCoefficientForRV } from '../../src/ladder/extinction.ts';
import { DEFAULT_ANALYSIS } from '../../src/types/analysis.ts';
import type { VariantResult } from '../../src/types/results.ts';
import { calibrateReleaseDir } from '../../src/cli/calibrate.ts';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

function variant(name: string, source: string, delta: number | null, net?: number | null): VariantResult {
  return {
    name,
    overrides: {},
    h0: delta === null ? null : 70 + delta,
    h0_stat: 1,
    delta_h0: delta,
    error: delta === null ? 'failed' : null,
    source,
    delta_h0_net: net,
  };
}

describe('the rule: half the full range per source, sources in quadrature', () => {
  it('half the range of the baseline (0) and the alternatives', () => {
    expect(halfRange([0.3, -0.1])).toBeCloseTo(0.2, 15);
    // one alternative: the baseline and it are the two ends, so half its shift
    expect(halfRange([0.5])).toBeCloseTo(0.25, 15);
    expect(halfRange([-0.5, -0.2])).toBeCloseTo(0.25, 15);
    expect(halfRange([])).toBe(0);
  });

  it('a harmless alternative does not shrink a source (the RMS rule did)', () => {
    const one = systematicSources([variant('a', 's', 0.4)]);
    const more = systematicSources([variant('a', 's', 0.4), variant('b', 's', 0), variant('c', 's', 0.01)]);
    expect(one[0].sigma_h0).toBeCloseTo(0.2, 15);
    expect(more[0].sigma_h0).toBeCloseTo(0.2, 15);
    // nor does a harmless source shrink the total: 0.2 alone, then 0.2 and 0 in quadrature
    expect(systematicError([variant('a', 's', 0.4), variant('z', 't', 0)])).toBeCloseTo(0.2, 15);
  });

  it('independent sources add in quadrature: 0.3 and 0.4 give 0.5', () => {
    const vs = [variant('a', 's', 0.6), variant('b', 't', -0.8), variant('c', 't', 0)];
    const src = systematicSources(vs);
    expect(src.map((s) => s.source)).toEqual(['s', 't']);
    expect(src[1].alternatives).toEqual(['b', 'c']);
    expect(systematicError(vs)).toBeCloseTo(0.5, 15);
  });

  it('the net shift, not the raw one, when the noise was removed; a failed variant counts no shift', () => {
    expect(systematicSources([variant('a', 's', 0.5, 0.3)])[0].sigma_h0).toBeCloseTo(0.15, 15);
    expect(systematicSources([variant('a', 's', null, null), variant('b', 's', 0.2)])[0].sigma_h0).toBeCloseTo(0.1, 15);
  });

  it('noise subtracted in quadrature, floored at zero, sign kept: 0.5 with noise 0.3 leaves 0.4', () => {
    expect(netShift(0.5, 0.3)).toBeCloseTo(0.4, 15);
    expect(netShift(-0.5, 0.3)).toBeCloseTo(-0.4, 15);
    expect(netShift(0.2, 0.3)).toBe(0);
    expect(netShift(0.2, 0)).toBe(0.2);
  });
});

describe('sources and data changes from the overridden keys', () => {
  it('keys of one choice are one source; keys of two choices make a source of their own', () => {
    expect(sourceOfVariant({ r_v: 3.3 }).id).toBe('extinction_law');
    expect(sourceOfVariant({ wesenheit_r: 0.4 }).id).toBe('extinction_law');
    expect(sourceOfVariant({ sn_alpha: 0.14, sn_beta: 3.1 }).id).toBe('sn_standardisation');
    expect(sourceOfVariant({ z_min: 0.01 }).id).toBe(sourceOfVariant({ z_max: 0.1 }).id);
    expect(sourceOfVariant({ z_min: 0.01, clip_sigma: 3 }).id).toBe('hubble_flow_range+outlier_rejection');
  });

  it('a clipping threshold or a redshift cut changes the data; R_V or alpha does not', () => {
    expect(changesData(DEFAULT_ANALYSIS, { clip_sigma: 3 })).toBe(true);
    expect(changesData(DEFAULT_ANALYSIS, { z_min: 0.01 })).toBe(true);
    expect(changesData(DEFAULT_ANALYSIS, { r_v: 3.3 })).toBe(false);
    expect(changesData(DEFAULT_ANALYSIS, { sn_alpha: 0.14 })).toBe(false);
    // a value equal to the baseline's changes nothing
    expect(changesData(DEFAULT_ANALYSIS, { clip_sigma: DEFAULT_ANALYSIS.clip_sigma })).toBe(false);
  });
});

describe('reference: R_V carried to the Wesenheit coefficient by CCM89 (Cardelli, Clayton & Mathis 1989, ApJ 345, 245)', () => {
  // Worked by hand from CCM89 eq. 2 (infrared) for H at 1.65 um, R_V = 3.1:
  //   x = 1/1.65 = 0.60606, x^1.61 = 0.44656, a = 0.574 x^1.61 = 0.25633, b = -0.527 x^1.61 = -0.23534,
  //   A_H/A_V = a + b/3.1 = 0.18041.
  // V at 0.55 um and I at 0.80 um from eq. 3 (y = x - 1.82), evaluated with python3 from the
  // paper's coefficients (an implementation independent of src/): A_V/A_V(0.55) = 0.99885,
  // A_I/A_V = 0.59749 at R_V = 3.1; 0.99890 and 0.60865 at R_V = 3.3; 0.99879 and 0.58479 at 2.9;
  // A_H/A_V = 0.18500 at 3.3 and 0.17516 at 2.9.
  //   R(3.1) = 0.18040 / (0.99885 - 0.59749) = 0.44947
  //   R(3.3) = 0.18500 / (0.99890 - 0.60865) = 0.47405
  //   R(2.9) = 0.17516 / (0.99879 - 0.58479) = 0.42310
  // Rounding of the 5-decimal inputs moves R by at most ~1e-4.
  it("the law's coefficient at 1.65, 0.55, 0.80 um", () => {
    expect(Math.abs(wesenheitCoefficient(3.1, 1.65, 0.55, 0.8) - 0.44947)).toBeLessThan(1e-4);
    expect(Math.abs(wesenheitCoefficient(3.3, 1.65, 0.55, 0.8) - 0.47405)).toBeLessThan(1e-4);
    expect(Math.abs(wesenheitCoefficient(2.9, 1.65, 0.55, 0.8) - 0.4231)).toBeLessThan(1e-4);
  });

  it('a release coefficient of 0.386 at R_V = 3.1 becomes 0.386 x 0.47405 / 0.44947 = 0.40711 at 3.3, 0.36336 at 2.9', () => {
    expect(Math.abs(wesenheitCoefficientForRV(0.386, 3.1, 3.3) - 0.40711)).toBeLessThan(2e-4);
    expect(Math.abs(wesenheitCoefficientForRV(0.386, 3.1, 2.9) - 0.36336)).toBeLessThan(2e-4);
    expect(wesenheitCoefficientForRV(0.386, 3.1, 3.1)).toBe(0.386);
  });

  it('a variant that changes only R_V gets the derived coefficient; one that states its own keeps it', () => {
    const base = { ...DEFAULT_ANALYSIS };
    const v = variantAnalysis(base, { r_v: 3.3 });
    expect(v.analysis.r_v).toBe(3.3);
    expect(Math.abs(v.analysis.wesenheit_r - 0.40711)).toBeLessThan(2e-4);
    expect(v.derived.wesenheit_r).toBe(v.analysis.wesenheit_r);
    const own = variantAnalysis(base, { r_v: 3.3, wesenheit_r: 0.39 });
    expect(own.analysis.wesenheit_r).toBe(0.39);
    expect(own.derived).toEqual({});
    expect(variantAnalysis(base, { clip_sigma: 3 }).analysis.wesenheit_r).toBe(base.wesenheit_r);
  });
});

describe('the demo release 2026.3', () => {
  it('results.json lists each source with its alternatives, shifts and expected noise; sys is their quadrature sum', async () => {
    const r = await calibrateReleaseDir(join(ROOT, 'content', 'releases', '2026.3'));
    const src = r.systematics!;
    expect(src.map((s) => s.source)).toEqual([
      'pl_metallicity',
      'hubble_flow_range',
      'extinction_law',
      'outlier_rejection',
      'sn_host_mass',
      'sn_standardisation',
    ]);
    expect(src.find((s) => s.source === 'extinction_law')!.alternatives).toEqual(['R_V 3.3', 'R_V 2.9']);
    const sumSq = src.reduce((s, x) => s + x.sigma_h0 ** 2, 0);
    expect(Math.abs(r.h0!.sys - Math.sqrt(sumSq))).toBeLessThan(1e-12);
    const budgetSys = r.budget.filter((b) => b.kind === 'systematic');
    expect(budgetSys.map((b) => b.source)).toEqual(src.map((s) => `systematic:${s.source}`));
    for (const v of r.variants) {
      expect(v.error).toBeNull();
      // model-only variants carry no noise; data-changing ones a positive noise below the statistical
      // error, unless they leave every row as it was (clipping at 4 sigma rejects nothing once the
      // Cepheid blends are modelled: then no shift and no noise)
      if (v.changes_data && v.delta_h0 !== 0) expect(v.noise_h0!).toBeGreaterThan(0);
      else expect(v.noise_h0).toBe(0);
      expect(v.noise_h0!).toBeLessThan(r.h0!.stat);
      expect(Math.abs(v.delta_h0_net!)).toBeLessThanOrEqual(Math.abs(v.delta_h0!));
    }
    // the R_V variants changed the Cepheids' coefficient, not only the main-sequence rung
    const rv33 = r.variants.find((v) => v.name === 'R_V 3.3')!;
    expect(Math.abs(rv33.derived!.wesenheit_r! - 0.40711)).toBeLessThan(2e-4);
  });
});
