/**
 * Writing and reading results.json. Output is deterministic (fixed key order from the
 * assembler, two-space indentation, trailing newline). A reader refuses an unknown major
 * schema version. Non-finite numbers are refused on write, so NaN never reaches a page.
 */
import { readFileSync } from 'node:fs';
import type { Results } from '../types/results.ts';
import { RESULTS_SCHEMA } from '../types/results.ts';

export class ResultsFormatError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ResultsFormatError';
  }
}

function assertFinite(value: unknown, path: string): void {
  if (typeof value === 'number') {
    if (!Number.isFinite(value)) throw new ResultsFormatError(`results.json would contain a non-finite number at ${path}`);
  } else if (Array.isArray(value)) {
    value.forEach((v, i) => assertFinite(v, `${path}[${i}]`));
  } else if (value && typeof value === 'object') {
    for (const [k, v] of Object.entries(value)) assertFinite(v, `${path}.${k}`);
  }
}

export function serializeResults(results: Results): string {
  assertFinite(results, 'results');
  return `${JSON.stringify(results, null, 2)}\n`;
}

export function parseResults(text: string, source = 'results.json'): Results {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (e) {
    throw new ResultsFormatError(`${source}: not valid JSON (${(e as Error).message})`);
  }
  const schema = (data as { schema?: unknown })?.schema;
  if (typeof schema !== 'string' || !schema.startsWith('rungbook.results/')) {
    throw new ResultsFormatError(`${source}: not a rungbook results file (schema ${JSON.stringify(schema)})`);
  }
  const major = schema.split('/')[1]?.split('.')[0];
  const ours = RESULTS_SCHEMA.split('/')[1];
  if (major !== ours) {
    throw new ResultsFormatError(`${source}: schema ${schema} has major version ${major}; this rungbook reads ${RESULTS_SCHEMA}`);
  }
  return data as Results;
}

export function readResults(file: string): Results {
  return parseResults(readFileSync(file, 'utf8'), file);
}
