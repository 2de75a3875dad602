/**
 * Runs tests/io/astropy_tables.py with the Python that has astropy (found by
 * tests/reference/astropy.ts), as an independent reference for units, ECSV
 * and VOTable. Missing astropy fails the test with the fix (no skip).
 */
import { execFileSync } from 'node:child_process';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { astropyPython } from '../reference/astropy.ts';

const SCRIPT = join(dirname(fileURLToPath(import.meta.url)), 'astropy_tables.py');

export function astropy<T>(request: Record<string, unknown>): T {
  const stdout = execFileSync(astropyPython(), [SCRIPT], { input: JSON.stringify(request), encoding: 'utf8' });
  return JSON.parse(stdout) as T;
}
