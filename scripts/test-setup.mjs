#!/usr/bin/env node
/**
 * Run by `npm test` before the type check and the test run. It makes sure the
 * machine holds what the tests need, and installs what is missing:
 *
 *   - node_modules (from package-lock.json, via `npm ci`);
 *   - a Python that can `import astropy` and compute with its cosmology module
 *     (Debian packages python3-astropy and python3-scipy), used by the reference
 *     tests as an independent calculator; python3-numpy (a dependency of astropy,
 *     named here because `npm run bench` uses it for its dense reference solve);
 *   - /usr/bin/chromium (Debian package chromium), used by the browser tests of
 *     the report.
 *
 * Quiet when everything is there. System packages are installed only when
 * running as root on a machine with apt-get; otherwise it says what to install
 * and exits 1. The chosen Python's path is written to
 * node_modules/.cache/rungbook-python so that the tests use the same one
 * (the default `python3` on PATH may be another installation without astropy).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = join(dirname(fileURLToPath(import.meta.url)), '..');
const PYTHON_CACHE_FILE = join(ROOT, 'node_modules', '.cache', 'rungbook-python');
const CHROMIUM_PATH = '/usr/bin/chromium';
/** Debian's own interpreter first: python3-astropy installs into it. */
const PYTHON_CANDIDATES = [process.env.RUNGBOOK_PYTHON, '/usr/bin/python3', 'python3'].filter(Boolean);

function fail(message) {
  process.stderr.write(`test-setup: ${message}\n`);
  process.exit(1);
}

function run(command, args, options = {}) {
  process.stderr.write(`test-setup: ${command} ${args.join(' ')}\n`);
  const result = spawnSync(command, args, { stdio: ['ignore', 'inherit', 'inherit'], cwd: ROOT, ...options });
  if (result.error) fail(`could not start ${command}: ${result.error.message}`);
  if (result.status !== 0) fail(`${command} ${args.join(' ')} exited with code ${result.status}`);
}

function isRoot() {
  return typeof process.getuid === 'function' && process.getuid() === 0;
}

function hasAptGet() {
  return spawnSync('apt-get', ['--version'], { stdio: 'ignore' }).status === 0;
}

/**
 * What the reference tests ask of astropy: its cosmology module computes a
 * luminosity distance (this needs scipy, only a Recommends of python3-astropy).
 */
const ASTROPY_PROBE = 'from astropy.cosmology import FlatLambdaCDM; FlatLambdaCDM(H0=70, Om0=0.3, Tcmb0=0).luminosity_distance(0.1)';

/** First candidate interpreter that can run the astropy probe, or null. */
function findAstropyPython() {
  for (const candidate of PYTHON_CANDIDATES) {
    const probe = spawnSync(candidate, ['-c', ASTROPY_PROBE], { stdio: 'ignore' });
    if (!probe.error && probe.status === 0) return candidate;
  }
  return null;
}

let aptUpdated = false;
function aptInstall(debianPackages, why) {
  const list = debianPackages.join(' ');
  if (!isRoot() || !hasAptGet()) {
    fail(`${why} is missing. Install the Debian package(s) ${list} ` + `(as root: apt-get update && apt-get install -y ${list}), then run npm test again.`);
  }
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  if (!aptUpdated) {
    run('apt-get', ['-o', 'DPkg::Lock::Timeout=600', 'update'], { env });
    aptUpdated = true;
  }
  // Wait (up to 10 min) for another apt/dpkg run to release its lock instead of failing at once.
  run('apt-get', ['-o', 'DPkg::Lock::Timeout=600', 'install', '-y', ...debianPackages], { env });
}

// 1. npm dependencies (the Python path is cached inside node_modules, so this comes first).
// (@astrojs/check: `astro check` of site/, run by npm test after tsc; a checkout installed before it was added lacks it.)
if (!existsSync(join(ROOT, 'node_modules', '.bin', 'vitest')) || !existsSync(join(ROOT, 'node_modules', '@astrojs', 'check'))) {
  run('npm', ['ci']);
}

// 2. A Python with astropy.
let python = findAstropyPython();
if (python === null) {
  aptInstall(['python3-astropy', 'python3-scipy', 'python3-numpy'], 'A Python interpreter with astropy (and scipy) for its cosmology');
  python = findAstropyPython();
  if (python === null) {
    fail(`python3-astropy and python3-scipy were installed but none of ${PYTHON_CANDIDATES.join(', ')} can import astropy.`);
  }
}
mkdirSync(dirname(PYTHON_CACHE_FILE), { recursive: true });
writeFileSync(PYTHON_CACHE_FILE, `${python}\n`);

// 3. Chromium for the browser tests of the report.
if (!existsSync(CHROMIUM_PATH)) {
  aptInstall(['chromium'], `The browser ${CHROMIUM_PATH}`);
  if (!existsSync(CHROMIUM_PATH)) fail(`chromium was installed but ${CHROMIUM_PATH} does not exist.`);
}
