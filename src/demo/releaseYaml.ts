/**
 * release.yaml text of a demo release, written by hand (not by a YAML library)
 * so the bytes are fixed: keys in the order of the format's example, analysis
 * keys in the order of DEFAULT_ANALYSIS, variants as one flow mapping per line.
 */
import { formatFloat, yamlString } from '../io/writeEcsv.ts';
import { ANALYSIS_KEYS, type AnalysisChoices } from '../types/analysis.ts';
import { COLLABORATION } from './names.ts';
import type { DemoVariant, ReleaseSpec } from './spec.ts';

type YamlValue = number | boolean | null | string | number[];

function yamlValue(v: YamlValue): string {
  if (v === null) return 'null';
  if (typeof v === 'boolean') return v ? 'true' : 'false';
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) throw new RangeError(`release.yaml value must be finite, found ${v}`);
    return formatFloat(v);
  }
  if (Array.isArray(v)) return `[${v.map((x) => yamlValue(x)).join(', ')}]`;
  return JSON.stringify(v); // a JSON string is a valid YAML double-quoted scalar
}

export function releaseYaml(spec: ReleaseSpec, statedZeroPointMas: number, statedZeroPointErrMas: number): string {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(spec.date)) throw new RangeError(`date must be YYYY-MM-DD, found ${spec.date}`);
  const unknownKeys = Object.keys(spec.analysis).filter((k) => !(ANALYSIS_KEYS as string[]).includes(k));
  if (unknownKeys.length > 0) throw new RangeError(`analysis: unknown key(s) ${unknownKeys.join(', ')}`);
  const analysis: Partial<Record<keyof AnalysisChoices, YamlValue>> = {
    ...spec.analysis,
    parallax_zero_point: statedZeroPointMas,
    parallax_zero_point_err: statedZeroPointErrMas,
  };
  const lines = [
    `# ${COLLABORATION}: data release ${spec.id}.`,
    '# Synthetic demonstration data: every object, name and number is invented.',
    `id: ${JSON.stringify(spec.id)}`,
    `title: ${JSON.stringify(spec.title)}`,
    `date: ${spec.date}`,
    `previous: ${spec.previous === null ? 'null' : JSON.stringify(spec.previous)}`,
    `blinded: ${spec.blinded ? 'true' : 'false'}`,
    'analysis:',
  ];
  for (const key of ANALYSIS_KEYS) {
    const v = analysis[key];
    if (v !== undefined) lines.push(`  ${key}: ${yamlValue(v)}`);
  }
  if (spec.variants.length > 0) {
    lines.push('  variants:');
    for (const variant of spec.variants) lines.push(`    - ${variantYaml(variant)}`);
  }
  return lines.join('\n') + '\n';
}

function variantYaml(variant: DemoVariant): string {
  const parts = [`name: ${JSON.stringify(variant.name)}`];
  for (const key of ANALYSIS_KEYS) {
    const v = (variant as Partial<Record<keyof AnalysisChoices, YamlValue>>)[key];
    if (v !== undefined) parts.push(`${yamlString(key)}: ${yamlValue(v)}`);
  }
  const known = new Set<string>(['name', ...ANALYSIS_KEYS]);
  const unknown = Object.keys(variant).filter((k) => !known.has(k));
  if (unknown.length > 0) throw new RangeError(`variant "${variant.name}": unknown key(s) ${unknown.join(', ')}`);
  return `{ ${parts.join(', ')} }`;
}
