/**
 * Runs astropy (Debian python3-astropy) as an independent calculator for the
 * reference tests, through tests/reference/astropy_luminosity_distance.py.
 *
 * The default `python3` on PATH may be an installation without astropy, so the
 * interpreter is the one scripts/test-setup.mjs found (cached in
 * node_modules/.cache/rungbook-python), else the first of /usr/bin/python3 and
 * python3 that can use astropy's cosmology. Missing astropy is a failure, not a
 * skip: the error says how to install it.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const HERE = dirname(fileURLToPath(import.meta.url));
const ROOT = join(HERE, '..', '..');
const SCRIPT = join(HERE, 'astropy_luminosity_distance.py');
const PYTHON_CACHE_FILE = join(ROOT, 'node_modules', '.cache', 'rungbook-python');
const PROBE = 'from astropy.cosmology import FlatLambdaCDM; FlatLambdaCDM(H0=70, Om0=0.3, Tcmb0=0).luminosity_distance(0.1)';

export interface AstropyLuminosityDistances {
  astropyVersion: string;
  /** Speed of light astropy uses, km/s. */
  cKmS: number;
  luminosityDistanceMpc: number[];
}

let chosenPython: string | undefined;

function candidates(): string[] {
  const list: string[] = [];
  if (existsSync(PYTHON_CACHE_FILE)) list.push(readFileSync(PYTHON_CACHE_FILE, 'utf8').trim());
  if (process.env.RUNGBOOK_PYTHON) list.push(process.env.RUNGBOOK_PYTHON);
  list.push('/usr/bin/python3', 'python3');
  return [...new Set(list.filter((p) => p.length > 0))];
}

/** The Python interpreter that can run astropy's cosmology; throws with the fix if there is none. */
export function astropyPython(): string {
  if (chosenPython !== undefined) return chosenPython;
  const tried = candidates();
  for (const python of tried) {
    const probe = spawnSync(python, ['-c', PROBE], { stdio: 'ignore' });
    if (!probe.error && probe.status === 0) {
      chosenPython = python;
      return python;
    }
  }
  throw new Error(
    `astropy is not available to any Python tried (${tried.join(', ')}). ` +
      `These reference tests need it as an independent calculator: run \`node scripts/test-setup.mjs\` ` +
      `(installs the Debian packages python3-astropy and python3-scipy when run as root), then the tests again.`,
  );
}

/** Flat Lambda-CDM luminosity distances (Tcmb0 = 0) computed by astropy. */
export function astropyFlatLcdmLuminosityDistances(h0KmSMpc: number, omegaM: number, z: number[]): AstropyLuminosityDistances {
  const python = astropyPython();
  const stdout = execFileSync(python, [SCRIPT], {
    input: JSON.stringify({ h0_km_s_mpc: h0KmSMpc, omega_m: omegaM, z }),
    encoding: 'utf8',
  });
  const parsed = JSON.parse(stdout) as { astropy_version: string; c_km_s: number; luminosity_distance_mpc: number[] };
  return {
    astropyVersion: parsed.astropy_version,
    cKmS: parsed.c_km_s,
    luminosityDistanceMpc: parsed.luminosity_distance_mpc,
  };
}
