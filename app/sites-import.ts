/**
 * Replacing every site from a file (Sites panel). The file is read and checked first — the schema with messages
 * that name the CSV row and column (or the GeoJSON feature), then each site against the terrain's extent — and
 * nothing changes when it is bad. When saved layouts name sites the file does not have, the planner is asked,
 * with the counts, whether to drop those layouts or keep them without the missing sites: never a dead end.
 */
import { fileLocator, type Locator, type Scenario } from '../shared/scenario.ts';
import { checkAgainstTerrain } from '../worker/io/scenario-text.ts';
import { ask } from './ask.ts';
import { readSitesFile } from './files.ts';
import type { PanelHost } from './panel-host.ts';
import { errorLines, offerText, plural, replaceSites, sitesOffer, type WorkState } from './state.ts';

/** What replacing the sites needs of the host. */
export type SitesImportHost = Pick<PanelHost, 'state' | 'terrain' | 'say' | 'commit'>;

/** Reads a sites file and replaces the sites, asking about layouts when it must. */
export async function replaceSitesFromFile(host: SitesImportHost, file: File): Promise<void> {
  const refused = (e: unknown) =>
    host.say('error', ['The sites were not replaced; your work is unchanged.', ...errorLines(e)]);
  let value: unknown;
  let locate: Locator;
  let kept: WorkState;
  try {
    const given = await readSitesFile(file);
    value = given.value;
    locate = given.locate ?? fileLocator(given.display);
    kept = replaceSites(host.state, value, { layouts: 'keep', locate });
    if (host.terrain) {
      const own = fileLocator('the working scenario');
      const s = { ...kept.doc, sites: kept.doc.sites.features } as unknown as Scenario;
      checkAgainstTerrain(s, host.terrain.bounds, file.name, (p) =>
        p[0] === 'sites' ? locate(p.slice(1)) : own(p),
      );
    }
  } catch (e) {
    refused(e);
    return;
  }
  const offer = sitesOffer(host.state, value);
  let next = kept;
  if (offer.affected.length > 0) {
    const choice = await ask(
      'Saved layouts name sites that are not in the file',
      offerText(offer, file.name),
      [
        {
          label: `Drop ${offer.affected.length === 1 ? 'that layout' : `those ${offer.affected.length} layouts`}`,
          value: 'drop' as const,
          id: 'sites-drop-layouts',
        },
        {
          label: `Keep ${offer.affected.length === 1 ? 'it' : 'them'} without the missing sites`,
          value: 'keep' as const,
          primary: true,
          id: 'sites-keep-layouts',
        },
      ],
      { id: 'sites-layouts-question' },
    );
    if (choice === null) {
      host.say('info', 'The sites were not replaced; your work is unchanged.');
      return;
    }
    if (choice === 'drop') {
      try {
        next = replaceSites(host.state, value, { layouts: 'drop', locate: locate! });
      } catch (e) {
        refused(e);
        return;
      }
    }
  }
  if (await host.commit(next)) {
    const layoutsLeft = next.doc.layouts.length;
    host.say(
      'info',
      `Sites: ${next.doc.sites.features.length} read from ${file.name}; ${plural(layoutsLeft, 'saved layout')}; ${plural(next.network.length, 'sensor')} in the network.`,
    );
  }
}
