/**
 * `rungbook build` in a process of its own, on fixture releases (their fake
 * calibration, no comparisons), for tests of builds that run at the same time:
 *   node --import tsx tests/report/buildProcess.ts RELEASES OUT WORK CACHE
 * WORK and CACHE stand for the work and cache folders of one checkout.
 */
import { main } from '../../src/cli/main.ts';
import type { BuildIo } from '../../src/cli/build.ts';
import { calibrateFixture } from '../fixtures/report/syntheticResults.ts';

const [releases, out, workDir, cacheDir] = process.argv.slice(2);
const io: BuildIo = {
  stdout: (s) => void process.stdout.write(s),
  stderr: (s) => void process.stderr.write(s),
  workDir,
  cacheDir,
  calibrate: calibrateFixture,
  compare: null,
};
process.exitCode = await main(['build', '--releases', releases!, '--out', out!, '--base', '/reports/h0/'], io as Parameters<typeof main>[1]);
