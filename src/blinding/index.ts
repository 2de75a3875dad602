/**
 * Blinded analysis (public entry point): hide H0 behind one magnitude offset on the
 * Hubble-flow supernovae until the collaboration unblinds, as a recorded act.
 * Method note: content/methods/blinding.md. Scheme: scheme.ts.
 */
export { BlindingError } from './errors.ts';
export {
  OFFSET_CANDIDATES,
  OFFSET_MAX_ABS_UNITS,
  OFFSET_MIN_ABS_UNITS,
  OFFSET_STEP_MAG,
  MIN_KEY_BYTES,
  SCHEME_DESCRIPTION,
  commitment,
  deriveOffsetUnits,
  deriveSalt,
  h0Factor,
  keyCheck,
  offsetMag,
  offsetText,
} from './scheme.ts';
export {
  BLINDING_SCHEMA,
  blindingRefOf,
  parseBlindingRecord,
  readBlindingRecord,
  serializeBlindingRecord,
  type BlindingRecord,
  type BlindingRef,
  type UnblindingEntry,
} from './record.ts';
export { blindReleaseFiles, type BlindOptions, type BlindedFiles, type FileContent } from './blindFiles.ts';
export { blindReleaseFolder, type BlindFolderOptions, type BlindFolderResult } from './blindFolder.ts';
export { unblindRecord, unblindReleaseDir, type UnblindOptions } from './unblind.ts';
export { applyBlindingRecord, loadReleaseWithBlinding, restoreHubbleFlowMagnitudes, unblindingSummary, withBlindingRecord } from './apply.ts';
export { compareH0Blinding, sameBlinding, type H0Comparison, type H0ShiftMeaning } from './compare.ts';
export { KEY_ENV, readBlindingKey, normaliseKey } from './key.ts';
