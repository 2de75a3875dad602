/**
 * The figures of a release, by stable id (the same id in every release, so a
 * link to `<release>/figures/<id>.png` can be moved from one release to the
 * next). A figure function returns null when its rung has no data.
 */
import type { Results } from '../../types/results.ts';
import { errorBudget } from './errorBudget.ts';
import { hubbleDiagram } from './hubbleDiagram.ts';
import { hubbleResiduals } from './hubbleResiduals.ts';
import { ladderDiagram } from './ladderDiagram.ts';
import { msLocus } from './msLocus.ts';
import { msTargets } from './msTargets.ts';
import { parallaxAnchors } from './parallaxAnchors.ts';
import { parallaxPosteriors } from './parallaxPosteriors.ts';
import { plRelation } from './plRelation.ts';
import { plResiduals } from './plResiduals.ts';
import type { FigureSpec } from './plotting.ts';
import { snCalibrators } from './snCalibrators.ts';
import { variants } from './variants.ts';

export { h0History } from './h0History.ts';
export type { FigureSpec } from './plotting.ts';

export const RELEASE_FIGURES: readonly { id: string; render: (r: Results) => FigureSpec | null }[] = [
  { id: 'ladder-diagram', render: ladderDiagram },
  { id: 'parallax-anchors', render: parallaxAnchors },
  { id: 'parallax-posteriors', render: parallaxPosteriors },
  { id: 'ms-locus', render: msLocus },
  { id: 'ms-targets', render: msTargets },
  { id: 'pl-relation', render: plRelation },
  { id: 'pl-residuals', render: plResiduals },
  { id: 'sn-calibrators', render: snCalibrators },
  { id: 'hubble-diagram', render: hubbleDiagram },
  { id: 'hubble-residuals', render: hubbleResiduals },
  { id: 'error-budget', render: errorBudget },
  { id: 'variants', render: variants },
];
