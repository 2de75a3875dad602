/**
 * Hybrid releases for the attribution: release a with some input groups taken from release b.
 *
 * Rules (the attribution's method string repeats them):
 *  - a table group taken from b replaces a's table whole (rows, file description);
 *  - the `analysis` group replaces a's analysis choices by b's (variants are never run in a
 *    hybrid: they do not change the baseline H0);
 *  - the systems table is the version of its group's side, plus, appended, the other side's
 *    row of every system that the hybrid's other tables reference and that version lacks. So a
 *    new host's catalogue entry comes with the Cepheids or supernovae that need it, and the
 *    `systems` group is credited only with changes to systems both sides describe (or that are
 *    referenced from both sides).
 * With no group from b the hybrid calibrates exactly as a; with every differing group from b
 * exactly as b (groups that do not differ give the calibration identical input).
 */
import { TABLE_NAMES, type Release, type SystemRow, type TableName } from '../types/release.ts';
import { withOverrides } from '../types/analysis.ts';
import { sameTableContent, tableField, tableRows, type AnyRow } from './rows.ts';
import { GROUP_NAMES, type GroupName } from './types.ts';

/** Whether a group gives the calibration different input in the two releases. */
export function groupDiffers(a: Release, b: Release, group: GroupName): boolean {
  if (group === 'analysis') return JSON.stringify(a.analysis) !== JSON.stringify(b.analysis);
  if (a.absentTables.includes(group) !== b.absentTables.includes(group)) return true;
  return !sameTableContent(group, tableRows(a, group), tableRows(b, group));
}

export function differingGroups(a: Release, b: Release): GroupName[] {
  return GROUP_NAMES.filter((g) => groupDiffers(a, b, g));
}

/** Systems referenced by the rows of the tables that name a system. */
function referencedSystems(release: Pick<Release, 'parallax' | 'mainSequence' | 'cepheids' | 'snCalibrators'>): Set<string> {
  const out = new Set<string>();
  for (const rows of [release.parallax, release.mainSequence, release.cepheids, release.snCalibrators]) {
    for (const r of rows) out.add(r.system);
  }
  return out;
}

/**
 * Release a with the groups in `fromB` taken from release b (see the rules above). The result
 * has no variants; its manifest is a's with the id marking it as a hybrid.
 */
export function hybridRelease(a: Release, b: Release, fromB: ReadonlySet<GroupName>): Release {
  const pick = (t: TableName): Release => (fromB.has(t) ? b : a);
  const out: Release = {
    ...a,
    manifest: { ...a.manifest, id: `${a.manifest.id}+${[...fromB].sort().join('+') || 'none'}` },
    analysis: withOverrides(fromB.has('analysis') ? b.analysis : a.analysis, {}),
    analysisKeysSet: [...(fromB.has('analysis') ? b : a).analysisKeysSet],
    variants: [],
    absentTables: TABLE_NAMES.filter((t) => pick(t).absentTables.includes(t)),
    inputs: [
      ...a.inputs.filter((i) => i.table === 'release' || i.table === 'notes'),
      ...TABLE_NAMES.flatMap((t) => pick(t).inputs.filter((i) => i.table === t)),
    ],
  };
  for (const t of TABLE_NAMES) {
    if (t === 'systems') continue;
    (out as unknown as Record<string, AnyRow[]>)[tableField(t)] = tableRows(pick(t), t);
  }
  const base = pick('systems');
  const other = base === a ? b : a;
  const have = new Set(base.systems.map((s) => s.system));
  const needed = referencedSystems(out);
  const extra: SystemRow[] = other.systems.filter((s) => needed.has(s.system) && !have.has(s.system));
  out.systems = extra.length ? [...base.systems, ...extra] : base.systems;
  if (extra.length && out.absentTables.includes('systems')) out.absentTables = out.absentTables.filter((t) => t !== 'systems');
  return out;
}

/** Groups as a bit mask over GROUP_NAMES (bit i set: group i taken from b). */
export function maskOf(groups: Iterable<GroupName>): number {
  let m = 0;
  for (const g of groups) m |= 1 << GROUP_NAMES.indexOf(g);
  return m;
}

export function groupsOfMask(mask: number): GroupName[] {
  return GROUP_NAMES.filter((_, i) => (mask & (1 << i)) !== 0);
}

/**
 * The part of a hybrid that fixes the early rungs' input (parallax and main-sequence rungs
 * read the parallax, main-sequence, systems and Cepheid tables; the systems union depends on
 * the supernova calibrators too). Hybrids with the same key can share a rung cache.
 */
export function earlyRungKey(mask: number): number {
  return mask & maskOf(['parallax', 'main_sequence', 'systems', 'cepheids', 'sn_calibrators']);
}
