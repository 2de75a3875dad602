/**
 * Seeded demo-data generator with known truth (public entry point).
 *
 *   const universe = generateUniverse(seed, scale);          // the truth
 *   const { files, truth } = observeRelease(universe, spec); // one release's files
 *   writeGeneratedRelease(tmpDir, 'r1', { seed: 7 });         // tests and benchmarks
 */
export { createRng, hashSeed, type Rng } from './random.ts';
export { DEMO_PARAMETERS, kinematicDistanceMpc, locusAbsMag, type DemoParameters, type FieldStarTruth, type ReleaseTruth, type SystemTruth } from './truth.ts';
export { generateUniverse, roundTo, type Universe, type UniverseOptions } from './universe.ts';
export { observeRelease, statedZeroPoint, type ObservedRelease } from './observe.ts';
export type { ReleaseSpec, ParallaxCatalogue, CepheidCatalogue, HubbleFlowCatalogue, SimpleCatalogue } from './spec.ts';
export {
  DEMO_ANALYSIS,
  DEMO_BLINDING,
  DEMO_HUBBLE_FLOW_POOL,
  DEMO_SEED,
  MH_OFFSET_MAG,
  PARALLAX_A,
  PARALLAX_B,
  cleanReleaseSpec,
  demoReleaseSpecs,
  offsetHosts,
} from './releases.ts';
export { generateDemoReleases, writeGeneratedRelease, writeReleaseFiles, type GeneratedReleaseOptions } from './write.ts';
