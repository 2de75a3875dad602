/**
 * Turns one ladder run (plus variants and budget) into the results.json structure.
 * Only bookkeeping here: every number was computed by a rung or the global fit.
 */
import { createHash } from 'node:crypto';
import type { Release, SupernovaLightCurve } from '../types/release.ts';
import type {
  BudgetEntry,
  CepheidResult,
  CheckResult,
  ParameterResult,
  Rejection,
  Results,
  SupernovaResult,
  SystemResult,
  SystemRole,
  VariantResult,
} from '../types/results.ts';
import { RESULTS_SCHEMA } from '../types/results.ts';
import type { LadderRun } from './ladderRun.ts';
import { PARAM, systemParam } from './globalModel.ts';
import { wesenheitMagnitude } from './cepheids.ts';
import { correctedMagnitude, correctedMagnitudeVariance } from './supernovae.ts';
import { hubbleFlowLogFactor } from './kinematics.ts';
import { distanceMpcFromModulus } from './distance.ts';
import { massStepIndicator } from './massStep.ts';
import { cepheidHostHomogeneity, homogeneityCheck } from './fitQuality.ts';
import { systematicSources } from './budget.ts';
import { chiSquarePValue } from '../math/special.ts';
import type { CalibrateOptions } from './ladderRun.ts';
import { HIDDEN_WHEN_BLINDED, parameterSpec } from '../registry/rungs.ts';

/** chi2/dof outside this band gets a warning (common practice, no source). */
const CHI2_PER_DOF_WARN: readonly [number, number] = [0.7, 1.5];

/** Unit and meaning of a published parameter, as the rung that adds it states them (src/registry/rungs.ts). */
function parameterInfo(name: string): { unit: string; description: string } {
  const spec = parameterSpec(name);
  if (!spec) throw new Error(`internal: parameter ${name} is added by no rung of src/registry/rungs.ts`);
  return { unit: spec.unit, description: spec.meaning };
}

const BLINDED_PARAMS = new Set(HIDDEN_WHEN_BLINDED);

/**
 * 68 % interval of an intrinsic scatter s from the standard error of s^2 (globalFit.ts,
 * scatterStandardError: err(s) = err(s^2) / (2 s), and err(s) = sqrt(err(s^2)) at s = 0).
 */
export function scatterInterval(s: number, err: number): [number, number] {
  const errS2 = s > 0 ? 2 * s * err : err * err;
  return [Math.sqrt(Math.max(0, s * s - errS2)), Math.sqrt(s * s + errS2)];
}

function sha256(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

/** Canonical JSON (sorted keys) so hashes do not depend on key order. */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (value && typeof value === 'object') {
    const keys = Object.keys(value as object).sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`).join(',')}}`;
  }
  return JSON.stringify(value);
}

type GlobalFit = NonNullable<LadderRun['fit']>;

/** The fitted parameters by name: index (-1 when not fitted), value and error. */
interface FittedParameters {
  p: number;
  idx(name: string): number;
  value(name: string): number;
  err(name: string): number;
}

function fittedParameters(fit: LadderRun['fit']): FittedParameters {
  const p = fit?.paramNames.length ?? 0;
  // a map, not indexOf: looked up once per Cepheid, which would make this quadratic
  const paramIndex = new Map(fit?.paramNames.map((name, i) => [name, i]) ?? []);
  const idx = (name: string) => paramIndex.get(name) ?? -1;
  return {
    p,
    idx,
    value: (name) => fit!.q[idx(name)],
    err: (name) => Math.sqrt(fit!.cov[idx(name) * p + idx(name)]),
  };
}

/** The global parameters of results.json, in their fixed order; blinded ones flagged. */
function parameterResults(release: Release, run: LadderRun, fp: FittedParameters): Record<string, ParameterResult> {
  const { fit, analysis } = run;
  const blinded = release.manifest.blinded;
  const parameters: Record<string, ParameterResult> = {};
  const { idx, value, err } = fp;
  const put = (name: string, v: number, e: number, extra: Partial<ParameterResult> = {}) => {
    parameters[name] = { value: v, err: e, ...parameterInfo(name), ...extra };
    if (blinded && BLINDED_PARAMS.has(name)) parameters[name].blinded = true;
  };
  if (fit) {
    for (const name of [PARAM.MW, PARAM.bW, PARAM.ZW, PARAM.MB, PARAM.aB, PARAM.dM]) {
      if (idx(name) >= 0) put(name, value(name), err(name));
    }
    if (idx(PARAM.MW) >= 0 && idx(PARAM.ZW) < 0) put('Z_W', 0, 0, { fixed: true });
    if (release.snCalibrators.length + release.snHubbleFlow.length > 0) {
      put('alpha', fit.alpha.value, fit.alpha.err, { fixed: fit.alpha.fixed });
      put('beta', fit.beta.value, fit.beta.err, { fixed: fit.beta.fixed });
    }
    // errors of the scatters: the spread of their moment estimator (globalFit.ts, scatterStandardError)
    if (release.cepheids.length)
      put('sigma_int_cepheid', fit.scatter.cepheids, fit.scatterErr.cepheids, { interval68: scatterInterval(fit.scatter.cepheids, fit.scatterErr.cepheids) });
    if (release.snCalibrators.length + release.snHubbleFlow.length > 0) {
      put('sigma_int_sn', fit.scatter.supernovae, fit.scatterErr.supernovae, {
        interval68: scatterInterval(fit.scatter.supernovae, fit.scatterErr.supernovae),
      });
    }
    if (idx(PARAM.zeta) >= 0) {
      put('parallax_zero_point', analysis.parallax_zero_point + value(PARAM.zeta), err(PARAM.zeta));
    }
  }
  return parameters;
}

/** Rows per system of one table, counted once per table (linear in the rows, not systems x rows). */
function rowCounter(): (rows: readonly { system: string }[], s: string) => number {
  const countsOf = (rows: readonly { system: string }[]) => {
    const m = new Map<string, number>();
    for (const r of rows) m.set(r.system, (m.get(r.system) ?? 0) + 1);
    return m;
  };
  const rowCounts = new Map<readonly { system: string }[], Map<string, number>>();
  return (rows, s) => {
    let m = rowCounts.get(rows);
    if (!m) rowCounts.set(rows, (m = countsOf(rows)));
    return m.get(s) ?? 0;
  };
}

/** What a system is in the ladder, from the tables it has rows in. */
function systemRoles(kind: string, rows: { parallax: number; main_sequence: number; cepheids: number; sn_calibrators: number }): SystemRole[] {
  const roles: SystemRole[] = [];
  if (rows.parallax > 0) roles.push(kind === 'field' ? 'field_star' : 'anchor');
  if (rows.parallax === 0 && rows.main_sequence > 0) roles.push('main_sequence_target');
  if (rows.cepheids > 0) roles.push('cepheid_system');
  if (rows.sn_calibrators > 0) roles.push('sn_host');
  return roles;
}

/** Every system's distance: from the global fit when it has a parameter there, else its prior. */
function systemResults(release: Release, run: LadderRun, fp: FittedParameters): SystemResult[] {
  const { fit, analysis, priors } = run;
  const { p, idx } = fp;
  const priorIndex = new Map(priors.systems.map((s, i) => [s, i]));
  const priorErr = (i: number) => {
    let v = priors.zpLoading[i] ** 2 * analysis.parallax_zero_point_err ** 2;
    for (const part of priors.parts) v += part.cov[i][i];
    return Math.sqrt(v);
  };
  const count = rowCounter();
  const targetBySystem = new Map(run.mainSequence.targets.map((t) => [t.system, t]));
  return release.systems.map((s) => {
    const rows = {
      parallax: count(release.parallax, s.system),
      main_sequence: count(release.mainSequence, s.system),
      cepheids: count(release.cepheids, s.system),
      sn_calibrators: count(release.snCalibrators, s.system),
    };
    const roles = systemRoles(s.kind, rows);
    const pi = priorIndex.get(s.system);
    const fi = idx(systemParam(s.system));
    let mu: number | null = null;
    let muErr: number | null = null;
    if (fi >= 0) {
      mu = fit!.q[fi];
      muErr = Math.sqrt(fit!.cov[fi * p + fi]);
    } else if (pi !== undefined) {
      mu = priors.mu[pi];
      muErr = priorErr(pi);
    }
    const target = targetBySystem.get(s.system);
    const method: SystemResult['method'] = rows.parallax > 0 ? 'parallax' : rows.main_sequence > 0 ? 'main_sequence' : mu !== null ? 'cepheid' : 'none';
    return {
      id: s.system,
      kind: s.kind,
      roles,
      method,
      mu,
      mu_err: muErr,
      distance_mpc: mu === null ? null : distanceMpcFromModulus(mu),
      mu_prior: pi !== undefined ? priors.mu[pi] : null,
      mu_prior_err: pi !== undefined ? priorErr(pi) : null,
      rows,
      feh: s.feh ?? null,
      ebv: target ? target.ebv : (s.ebv ?? null),
      ebv_err: target ? target.ebv_err : (s.ebvErr ?? null),
    };
  });
}

type ResidualIndex = Map<string, { residual: number; variance: number; rejected: boolean; membership: number }>;

/** The global fit's residual of every row (kept and rejected), keyed "table:id". */
function residualIndex(fit: LadderRun['fit']): ResidualIndex {
  const residualByKey: ResidualIndex = new Map();
  if (fit) {
    for (const r of [...fit.residuals, ...fit.rejected]) {
      residualByKey.set(`${r.ref.table}:${r.ref.id}`, { residual: r.residual, variance: r.variance, rejected: r.rejected, membership: r.membership });
    }
  }
  return residualByKey;
}

/** Every Cepheid with a fitted distance: Wesenheit magnitude, absolute magnitude, residual. */
function cepheidResults(release: Release, run: LadderRun, fp: FittedParameters, residualByKey: ResidualIndex): CepheidResult[] {
  const { fit, analysis } = run;
  const fieldSystems = new Set(release.systems.filter((s) => s.kind === 'field').map((s) => s.system));
  return release.cepheids
    .map((c) => {
      const wm = wesenheitMagnitude(c, analysis.wesenheit_r);
      const name = fieldSystems.has(c.system) ? `mu:${c.system}/${c.star}` : systemParam(c.system);
      const mi = fp.idx(name);
      const mu = mi >= 0 ? fit!.q[mi] : NaN;
      const r = residualByKey.get(`cepheids:${c.star}`);
      return {
        star: c.star,
        system: c.system,
        line: c.line,
        log_period: wm.logPeriod,
        w: wm.w,
        w_err: wm.wErr,
        oh: c.oh,
        abs_w: mi >= 0 ? wm.w - mu : NaN,
        residual: r ? r.residual : NaN,
        rejected: r ? r.rejected : false,
        membership: r ? r.membership : 1,
      };
    })
    .filter((c) => Number.isFinite(c.abs_w));
}

/** The supernovae, calibrators and Hubble flow: standardised magnitude, distance modulus, residual. */
function supernovaResults(
  release: Release,
  run: LadderRun,
  fp: FittedParameters,
  residualByKey: ResidualIndex,
): { calibrators: SupernovaResult[]; hubble_flow: SupernovaResult[] } {
  const { fit, analysis } = run;
  const { idx, value } = fp;
  const alpha = fit?.alpha.value ?? 0;
  const beta = fit?.beta.value ?? 0;
  const mB = idx(PARAM.MB) >= 0 ? value(PARAM.MB) : NaN;
  const aB = idx(PARAM.aB) >= 0 ? value(PARAM.aB) : NaN;
  // host-mass step (massStep.ts): the part of a supernova's magnitude that is not distance
  const stepOf = (sn: SupernovaLightCurve) => (idx(PARAM.dM) >= 0 ? value(PARAM.dM) * massStepIndicator(sn, analysis.sn_mass_step_logmass!) : 0);
  const calibrators: SupernovaResult[] = fit
    ? release.snCalibrators.map((sn) => {
        const r = residualByKey.get(`sn_calibrators:${sn.sn}`);
        const mCorr = correctedMagnitude(sn, alpha, beta);
        return {
          sn: sn.sn,
          system: sn.system,
          line: sn.line,
          z: null,
          m_b: sn.mB,
          x1: sn.x1,
          c: sn.c,
          m_corr: mCorr,
          m_corr_err: Math.sqrt(correctedMagnitudeVariance(sn, alpha, beta)),
          mu: mCorr - mB - stepOf(sn),
          residual: r ? r.residual : NaN,
          in_sample: true,
          rejected: r ? r.rejected : false,
        };
      })
    : [];
  const usedIds = new Set(run.hubbleFlow.used.map((h) => h.row.sn));
  const hubbleFlow: SupernovaResult[] =
    fit && idx(PARAM.aB) >= 0
      ? release.snHubbleFlow.map((sn) => {
          const r = residualByKey.get(`sn_hubble_flow:${sn.sn}`);
          const mCorr = correctedMagnitude(sn, alpha, beta);
          return {
            sn: sn.sn,
            system: null,
            line: sn.line,
            z: sn.z,
            m_b: sn.mB,
            x1: sn.x1,
            c: sn.c,
            m_corr: mCorr,
            m_corr_err: Math.sqrt(correctedMagnitudeVariance(sn, alpha, beta)),
            mu: mCorr - mB - stepOf(sn),
            residual: r ? r.residual : mCorr - stepOf(sn) - (5 * hubbleFlowLogFactor(sn.z, analysis.q0, analysis.j0) - 5 * aB),
            in_sample: usedIds.has(sn.sn),
            rejected: r ? r.rejected : false,
          };
        })
      : [];
  return { calibrators, hubble_flow: hubbleFlow };
}

/** Rows the global fit clipped or down-weighted as outliers. */
function rejectedRows(fit: LadderRun['fit']): Rejection[] {
  return [
    ...(fit?.rejected ?? []).map((r) => ({ r, treatment: 'clipped' as const })),
    ...(fit?.downweighted ?? []).map((r) => ({ r, treatment: 'downweighted' as const })),
  ].map(({ r, treatment }) => ({
    table: r.ref.table as Rejection['table'],
    id: r.ref.id,
    system: r.ref.system,
    line: r.ref.line,
    residual_sigma: r.standardised,
    treatment,
    membership: r.ref.table === 'cepheids' ? r.membership : null,
  }));
}

/** The checks of the global fit itself (chi2 per degree of freedom, outliers), after the rungs' checks. */
function globalFitChecks(fit: GlobalFit, clipSigma: number | null, nRejected: number): CheckResult[] {
  const ratio = fit.chi2 / fit.dof;
  return [
    {
      id: 'fit-quality',
      title: 'Global fit chi2 per degree of freedom (about 1 by construction)',
      passed: ratio >= CHI2_PER_DOF_WARN[0] && ratio <= CHI2_PER_DOF_WARN[1],
      severity: 'warning',
      detail:
        `chi2/dof = ${ratio.toFixed(3)} (${fit.chi2.toFixed(1)} / ${fit.dof}): about 1 by construction, because the intrinsic scatters are fitted to make each group's chi2 match its degrees of freedom. ` +
        'It is not a test of the fit; the host-scatter check (Bartlett) is the one that can fail.',
    },
    {
      id: 'outliers',
      title: 'Outlier rejection',
      passed: nRejected <= 0.05 * fit.nData,
      severity: 'info',
      detail: clipSigma === null ? 'outlier rejection disabled (clip_sigma: null)' : `${nRejected} rows rejected beyond ${clipSigma} sigma`,
    },
  ];
}

/** Correlation matrix of the main parameters of the global fit. */
function mainCorrelation(fit: LadderRun['fit'], fp: FittedParameters): Results['correlation'] {
  const { p, idx } = fp;
  const mainNames = [PARAM.MW, PARAM.bW, PARAM.ZW, PARAM.MB, PARAM.aB, PARAM.zeta].filter((n) => idx(n) >= 0);
  const corr = mainNames.map((a) =>
    mainNames.map((b) => {
      const i = idx(a);
      const j = idx(b);
      return fit!.cov[i * p + j] / Math.sqrt(fit!.cov[i * p + i] * fit!.cov[j * p + j]);
    }),
  );
  return { names: mainNames, matrix: corr };
}

/** H0 with its statistical, systematic and total errors (km/s/Mpc), when the Hubble flow is reached. */
function h0Result(run: LadderRun, sys: number): Results['h0'] {
  if (!run.log10H0) return null;
  const value = 10 ** run.log10H0.value;
  const stat = value * Math.LN10 * Math.sqrt(run.log10H0.variance);
  return { value, stat, sys, total: Math.sqrt(stat * stat + sys * sys) };
}

/** The fit summary of results.json (zeros when the ladder stopped before the global fit). */
function fitSummary(fit: LadderRun['fit'], p: number, nRejected: number, quality: ReturnType<typeof cepheidHostHomogeneity> | null): Results['fit'] {
  return fit
    ? {
        chi2: fit.chi2,
        dof: fit.dof,
        p_value: chiSquarePValue(fit.chi2, fit.dof),
        n_data: fit.nData,
        n_parameters: p,
        n_rejected: nRejected,
        converged: fit.converged,
        iterations: fit.iterations,
        scatter: fit.scatter,
        quality,
      }
    : {
        chi2: 0,
        dof: 0,
        p_value: 1,
        n_data: 0,
        n_parameters: 0,
        n_rejected: 0,
        converged: true,
        iterations: 0,
        scatter: { cepheids: 0, supernovae: 0 },
      };
}

export function assembleResults(
  release: Release,
  run: LadderRun,
  variants: VariantResult[],
  sys: number,
  budget: BudgetEntry[],
  options: CalibrateOptions,
): Results {
  const { fit } = run;
  const fp = fittedParameters(fit);
  const residualByKey = residualIndex(fit);
  const rejected = rejectedRows(fit);
  // fit quality that can fail (fitQuality.ts): its check comes after the checks of the rungs
  const quality = fit ? cepheidHostHomogeneity(fit) : null;
  const checks: CheckResult[] = [...run.checks, ...(fit ? globalFitChecks(fit, run.analysis.clip_sigma, rejected.length) : [])];
  const analysisHash = sha256(canonicalJson({ analysis: release.analysis, variants: release.variants }));
  const inputsHash = sha256(release.inputs.map((i) => `${i.file}:${i.sha256}`).join('\n'));
  return {
    schema: RESULTS_SCHEMA,
    release: {
      id: release.manifest.id,
      title: release.manifest.title,
      date: release.manifest.date,
      previous: release.manifest.previous,
    },
    blinded: release.manifest.blinded,
    unblinding: null,
    reached: run.reached,
    h0: h0Result(run, sys),
    parameters: parameterResults(release, run, fp),
    systems: systemResults(release, run, fp),
    budget,
    variants,
    systematics: systematicSources(variants),
    fit: fitSummary(fit, fp.p, rejected.length, quality),
    rejected,
    checks: quality ? [...checks, homogeneityCheck(quality)] : checks,
    correlation: mainCorrelation(fit, fp),
    rungs: {
      parallax: {
        anchors: run.parallax.anchors,
        stars: run.parallax.stars,
        anchor_covariance: run.parallax.anchorCovariance,
      },
      main_sequence: {
        locus: run.mainSequence.locus,
        targets: run.mainSequence.targets,
        stars: run.mainSequence.stars,
      },
      cepheids: cepheidResults(release, run, fp, residualByKey),
      supernovae: supernovaResults(release, run, fp, residualByKey),
    },
    analysis: release.analysis,
    analysis_set: release.analysisKeysSet,
    provenance: {
      inputs: release.inputs,
      code_version: options.codeVersion,
      analysis_hash: analysisHash,
      inputs_hash: inputsHash,
    },
  };
}
