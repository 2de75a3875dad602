/**
 * Main-sequence targets with large colour errors at the faint red end (src/ladder/mainSequenceTarget.ts,
 * mainSequenceLocus.ts, mainSequence.ts).
 * [recovery] a target shaped like the demo's nearby galaxy (200 stars, true colours ending at a faint
 *   limit, colour errors growing to 0.086 mag at the red end, 28 % equal-mass binaries): mean
 *   (mu - truth) within 4 standard errors of zero, pull SD within the recovery bounds. Measured on
 *   this simulation: now -0.0075 +- 0.0039 mag (E - truth -0.0019 +- 0.0014); the
 *   magnitude-at-colour fit this replaced gave -0.027 +- 0.004 (E -0.008 +- 0.001) and fails the test.
 *   With E fixed both are within 0.01 mag (now -0.003 +- 0.001, before -0.005 +- 0.001).
 * [recovery] the locus scatter is the star-to-star width: anchors offset from each other (their
 *   reddening and metallicity errors) do not widen it.
 * [propagation] the targets' sensitivities to the locus binary fraction and scatter agree with a
 *   full refit (selection redone) with those quantities changed.
 * [edge] binary prior weights: the target's own fraction in the body of a flat luminosity function,
 *   low within 0.753 mag of its faint end.
 * The locus, stars and errors are invented; the error law (growing to the faint red end) is common
 * practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { createRng } from '../../src/demo/random.ts';
import { polyValue } from '../../src/math/polynomial.ts';
import { binaryWeights, fitTarget, type LocusForTargets, type ReddeningPrior, type TargetStarInput } from '../../src/ladder/mainSequenceTarget.ts';
import { fitLocus, type LocusStarInput } from '../../src/ladder/mainSequenceLocus.ts';
import { STAT_SIGMAS } from '../tolerances.ts';

/** 2.5 log10 2: an unresolved equal-mass pair has twice the flux at the same colour. */
const BINARY_MAG = 2.5 * Math.log10(2);
/** Shaped like the demo's fitted locus (absolute V at [Fe/H] = 0 in B-V - 0.8). */
const LOCUS: LocusForTargets = { coeffs: [5.33, 5.23, -1.18, 0.9], pivot: 0.8, colorRange: [0.4, 1.2], scatter: 0.03, binaryFraction: 0.28 };
const MU = 18.5;
const EBV = 0.12;
const EBV_ERR = 0.02;
const FEH = -0.2;
const OPTS = { rV: 3.1, fehSlope: 0.98, feh: FEH, minStars: 5 };

/** 200 stars with true colours 0.26-1.16 (the faint limit), errors growing to the red end. */
function target(seed: number, fraction = LOCUS.binaryFraction): TargetStarInput[] {
  const rng = createRng(seed, 'ms-target-bias');
  return Array.from({ length: 200 }, () => {
    const c0 = rng.between(0.26, 1.16);
    const colorErr = 0.014 + 0.072 * ((c0 - 0.26) / 0.9) ** 3;
    const magErr = 0.78 * colorErr;
    const binary = rng.chance(fraction) ? -BINARY_MAG : 0;
    const mag =
      polyValue(LOCUS.coeffs, c0 - LOCUS.pivot) - OPTS.fehSlope * FEH + MU + OPTS.rV * EBV + binary + rng.gauss(0, LOCUS.scatter) + rng.gauss(0, magErr);
    return { color: c0 + EBV + rng.gauss(0, colorErr), colorErr, mag, magErr };
  });
}

const mean = (x: readonly number[]) => x.reduce((a, b) => a + b, 0) / x.length;
const sd = (x: readonly number[]) => Math.sqrt(x.reduce((a, b) => a + (b - mean(x)) ** 2, 0) / (x.length - 1));

describe('a target with large colour errors at the faint red end [recovery]', () => {
  const SEEDS = 120;
  it(`E(B-V) prior 0.02: mu unbiased within ${STAT_SIGMAS} standard errors, pull SD 0.85-1.15 (${SEEDS} seeds)`, () => {
    const d: number[] = [];
    const pulls: number[] = [];
    const dE: number[] = [];
    for (let seed = 1; seed <= SEEDS; seed++) {
      const rng = createRng(seed, 'ms-target-bias-prior');
      const prior: ReddeningPrior = { kind: 'gaussian', ebv: EBV + rng.gauss(0, EBV_ERR), ebvErr: EBV_ERR };
      const f = fitTarget(target(seed), LOCUS, { ...OPTS, prior });
      d.push(f.mu - MU);
      dE.push(f.ebv - EBV);
      pulls.push((f.mu - MU) / Math.sqrt(f.covFit[0][0]));
    }
    console.log(
      `[faint red end, E prior, ${SEEDS} seeds] mu - true ${mean(d).toFixed(4)} ± ${(sd(d) / Math.sqrt(SEEDS)).toFixed(4)}, E - true ${mean(dE).toFixed(4)} ± ${(sd(dE) / Math.sqrt(SEEDS)).toFixed(4)}, pull SD ${sd(pulls).toFixed(3)}`,
    );
    // 4 standard errors: about 0.017 mag here, so the former -0.042 mag fails.
    expect(Math.abs(mean(d))).toBeLessThan((STAT_SIGMAS * sd(d)) / Math.sqrt(SEEDS));
    expect(Math.abs(mean(dE))).toBeLessThan((STAT_SIGMAS * sd(dE)) / Math.sqrt(SEEDS));
    // SE of an SD from 120 seeds: 0.065; the bounds of rungbook recover.
    expect(sd(pulls)).toBeGreaterThan(0.85);
    expect(sd(pulls)).toBeLessThan(1.15);
  }, 300_000);

  it(`E(B-V) fixed at the truth: mu within 0.01 mag (a fifth of the error with a prior) (${SEEDS} seeds)`, () => {
    // Measured: -0.003 +- 0.001 mag (the former fit: -0.005 here). What is left is of order
    // (mag_err^2 + scatter^2) times the slope of the luminosity function and the smoothing of its
    // faint end in binaryWeights; it is a fifth of this target's error with an E prior, and a tenth
    // of a sigma in a recovery. The bound is that size, not a number of standard errors.
    const d: number[] = [];
    for (let seed = 1; seed <= SEEDS; seed++) d.push(fitTarget(target(seed), LOCUS, { ...OPTS, prior: { kind: 'fixed', ebv: EBV } }).mu - MU);
    console.log(`[faint red end, E fixed, ${SEEDS} seeds] mu - true ${mean(d).toFixed(4)} ± ${(sd(d) / Math.sqrt(SEEDS)).toFixed(4)}`);
    expect(Math.abs(mean(d))).toBeLessThan(0.01);
  }, 300_000);
});

describe('locus scatter with anchors offset from each other [recovery]', () => {
  it('three anchors shifted by -0.06, 0, +0.06 mag (their common errors): scatter 0.03 recovered, not widened (40 seeds)', () => {
    const TRUE_SCATTER = 0.03;
    const offsets = [-0.06, 0, 0.06];
    const fitted: number[] = [];
    for (let seed = 1; seed <= 40; seed++) {
      const rng = createRng(seed, 'locus-offsets');
      const stars: LocusStarInput[] = [];
      offsets.forEach((off, a) => {
        for (let k = 0; k < 100; k++) {
          const c0 = rng.between(0.4, 1.2);
          const y = polyValue(LOCUS.coeffs, c0 - LOCUS.pivot) + off + rng.gauss(0, TRUE_SCATTER) + rng.gauss(0, 0.008) - (rng.chance(0.25) ? BINARY_MAG : 0);
          stars.push({ anchor: a, color0: c0 + rng.gauss(0, 0.01), absMagFeh0: y, magErr: 0.008, colorErr: 0.01 });
        }
      });
      fitted.push(fitLocus(stars, { degree: 3, pivot: 0.8, rV: 3.1, fehSlope: 0.98, nAnchors: 3 }).scatter);
    }
    const se = sd(fitted) / Math.sqrt(fitted.length);
    // Measured: 0.0298 +- 0.0009; the scatter about the common locus (the former estimate) gave 0.0572.
    console.log(`[locus scatter, anchors offset, 40 seeds] ${mean(fitted).toFixed(4)} ± ${se.toFixed(4)} (true ${TRUE_SCATTER})`);
    // The colour error 0.01 drawn on the abscissa is counted by the fit through P' in the variance;
    // ML on 300 stars is low by about 1 % (degrees of freedom), inside the bound.
    expect(Math.abs(mean(fitted) - TRUE_SCATTER)).toBeLessThan(STAT_SIGMAS * se + 0.001);
  });
});

describe('sensitivities to the locus binary fraction and scatter [propagation]', () => {
  it('d(mu, E)/d fraction and d(mu, E)/d scatter agree with full refits (selection redone) within 5 %', () => {
    const stars = target(3);
    const opts = { ...OPTS, prior: { kind: 'gaussian' as const, ebv: EBV, ebvErr: EBV_ERR } };
    const base = fitTarget(stars, LOCUS, opts);
    const step = 0.01;
    const up = fitTarget(stars, { ...LOCUS, binaryFraction: LOCUS.binaryFraction + step }, opts);
    const dn = fitTarget(stars, { ...LOCUS, binaryFraction: LOCUS.binaryFraction - step }, opts);
    const fdF = (up.mu - dn.mu) / (2 * step);
    const upS = fitTarget(stars, { ...LOCUS, scatter: LOCUS.scatter + step / 2 }, opts);
    const dnS = fitTarget(stars, { ...LOCUS, scatter: LOCUS.scatter - step / 2 }, opts);
    const fdS = (upS.mu - dnS.mu) / step;
    // A real effect (the fraction moves mu: binaries are weighed against singles), then agreement.
    expect(Math.abs(fdF)).toBeGreaterThan(1e-3);
    expect(Math.abs(base.dThetaDFraction[0] - fdF)).toBeLessThan(0.05 * Math.abs(fdF) + 1e-4);
    expect(Math.abs(base.dThetaDScatter[0] - fdS)).toBeLessThan(0.05 * Math.abs(fdS) + 1e-4);
  }, 60_000);
});

describe('binary prior weights [edge]', () => {
  it('a flat luminosity function: the fraction in its body, low within 0.753 mag of its faint end', () => {
    const rng = createRng(1, 'binary-weights');
    const mags = Array.from({ length: 4000 }, () => rng.between(20, 25));
    const w = binaryWeights(mags, 0.3);
    const body = w.filter((_, i) => mags[i] > 20.5 && mags[i] < 24);
    const end = w.filter((_, i) => mags[i] > 24.4 && mags[i] < 24.95 - BINARY_MAG + 0.75);
    expect(Math.abs(mean(body) - 0.3)).toBeLessThan(0.03);
    expect(mean(end)).toBeLessThan(0.06);
    // Held within f/10 and 1 - (1-f)/10 everywhere.
    expect(Math.min(...w)).toBeGreaterThanOrEqual(0.03 - 1e-12);
    expect(Math.max(...w)).toBeLessThanOrEqual(0.93 + 1e-12);
  });
});
