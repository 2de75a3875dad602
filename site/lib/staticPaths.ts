/**
 * The pages' getStaticPaths, once each: which pages a route has, and the data each gets. A page
 * takes one (`export const getStaticPaths = perRelease;`) and types its props from it
 * (`type Props = InferGetStaticPropsType<typeof getStaticPaths>`), so no page casts its data.
 * The parameters are the segments that src/layout/routes.ts puts into the same routes.
 */
import { allReleases, allSystemPages, siteData } from './data';

/** One page per release (releases/[id]/...). */
export async function perRelease() {
  return (await allReleases()).map((release) => ({ params: { id: release.id }, props: { release } }));
}

/** One page per rung of each release (releases/[id]/[rung]/). */
export async function perRung() {
  return (await allReleases()).flatMap((release) => release.rungs.map((rung) => ({ params: { id: release.id, rung: rung.slug }, props: { release, rung } })));
}

/** One page per figure of each release (releases/[id]/figures/[figure]/). */
export async function perReleaseFigure() {
  return (await allReleases()).flatMap((release) =>
    Object.values(release.figures).map((fig) => ({ params: { id: release.id, figure: fig.id }, props: { release, fig } })),
  );
}

/** The recovery page, for the releases with a recovery summary (releases/[id]/recovery/). */
export async function perRecovery() {
  return (await allReleases()).flatMap((release) => (release.recovery ? [{ params: { id: release.id }, props: { release, recovery: release.recovery } }] : []));
}

/** One page per system of each release (releases/[id]/systems/[system]/). */
export async function perSystem() {
  const releases = new Map((await allReleases()).map((r) => [r.id, r]));
  return (await allSystemPages()).flatMap((page) => {
    const release = releases.get(page.release);
    return release ? [{ params: { id: page.release, system: page.segment }, props: { page, release } }] : [];
  });
}

/** The report-wide figures' pages (figures/[figure]/). */
export async function perSiteFigure() {
  const site = await siteData();
  return site.history ? [{ params: { figure: site.history.id }, props: { fig: site.history } }] : [];
}
