/**
 * What one pass of the ladder produces, and the options of a calibration. Declared apart from
 * calibrate.ts, which runs the pass, so that the modules that read a run (assemble.ts,
 * budget.ts, variants.ts, fitSnapshot.ts) sit below it in the import graph.
 */
import type { AnalysisChoices } from '../types/analysis.ts';
import type { CheckResult, Results } from '../types/results.ts';
import type { DistancePriorBlock } from './types.ts';
import type { fitParallaxRung } from './parallax.ts';
import type { fitMainSequenceRung } from './mainSequence.ts';
import type { selectHubbleFlow } from './hubbleFlow.ts';
import type { fitGlobal } from './globalFit.ts';

/** Everything one pass of the ladder produces (before variants). */
export interface LadderRun {
  analysis: AnalysisChoices;
  parallax: ReturnType<typeof fitParallaxRung>;
  mainSequence: ReturnType<typeof fitMainSequenceRung>;
  priors: DistancePriorBlock;
  hubbleFlow: ReturnType<typeof selectHubbleFlow>;
  fit: ReturnType<typeof fitGlobal> | null;
  /** log10 H0 and its statistical variance, when the Hubble flow is reached. */
  log10H0: { value: number; variance: number; gradient: Float64Array } | null;
  checks: CheckResult[];
  reached: Results['reached'];
}

export interface CalibrateOptions {
  codeVersion: string;
}
