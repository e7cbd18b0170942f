import { formatDay } from './field/words';
import { formatQuantities } from './tally-words';

/**
 * The words of each kind of flag, on the flags lists and in the e-mail that tells the landowner (and
 * the stewards of a club permit) about an entry. Pure, so the mail's words are tested without sending.
 */
export type FlagKind = 'breach' | 'nearing' | 'over-on-sync' | 'off-permit';

export const flagKinds: FlagKind[] = ['breach', 'nearing', 'over-on-sync', 'off-permit'];

export const flagKindWords: Record<FlagKind, string> = { breach: 'Breach', nearing: 'Nearing', 'over-on-sync': 'Over on sync', 'off-permit': 'Off permit' };

/** One line under each flag's title, saying what the kind means. */
export const flagKindMeanings: Record<FlagKind, string> = {
  breach: 'Took a limit over; the forager confirmed going over.',
  nearing: 'Took a tally into nearing or reached.',
  'over-on-sync': "Over on sync: recorded offline within the device's tallies, over once others' entries were counted.",
  'off-permit': 'Off permit: recorded offline where or when harvest was not allowed (permit, closure, zone, position or season).',
};

/** The kinds told at once by e-mail; a nearing tally waits for the flags list. */
export const toldFlagKinds: FlagKind[] = ['breach', 'over-on-sync', 'off-permit'];

export type NoticeFacts = {
  entryId: string;
  parcelId: string;
  parcelName: string;
  species: string;
  forager: string;
  quantities: { quantity: string; unit: string }[];
  countedOn: string;
  correction: boolean;
  /** The entry's flag, if any (a breach recorded before flags existed has none). */
  flagKind: FlagKind | null;
  flagMessage: string | null;
};

export type NoticeMail = { purpose: string; heading: string; paragraphs: string[]; dedupeKey: (to: string) => string; url: string };

/**
 * The e-mail about one entry: a breach (confirmed going over), over on sync or off permit. Each
 * recipient is told once per entry: the dedupe key names the entry and the address.
 */
export function noticeMail(f: NoticeFacts, origin: string): NoticeMail | null {
  const kind = f.flagKind ?? 'breach';
  if (!toldFlagKinds.includes(kind)) return null;
  const url = `${origin}/land/${f.parcelId}/tallies`;
  const took = `${f.forager} recorded ${formatQuantities(f.quantities)} of ${f.species} on ${formatDay(f.countedOn)}`;
  const follow = 'Follow it up with them; the ledger keeps the entry and any correction.';
  if (kind === 'over-on-sync') {
    return {
      purpose: 'over-on-sync', url, dedupeKey: (to) => `over-on-sync:${f.entryId}:${to}`,
      heading: `Limit went over on sync on ${f.parcelName}`,
      paragraphs: [
        `${took} with no signal. It was within the limits on their phone, but once others' entries recorded meanwhile were counted it takes a harvest limit over. It is recorded and flagged "over on sync".`,
        follow,
      ],
    };
  }
  if (kind === 'off-permit') {
    const why = f.flagMessage?.replace(/^Off permit: /, '') ?? '';
    return {
      purpose: 'off-permit', url, dedupeKey: (to) => `off-permit:${f.entryId}:${to}`,
      heading: `Harvest recorded off permit on ${f.parcelName}`,
      paragraphs: [`${took} with no signal, where or when harvest was not allowed. It is recorded and flagged "off permit".`, ...(why ? [`What their phone was told: "${why}"`] : []), follow],
    };
  }
  const what = f.correction
    ? `${f.forager} corrected their entry of ${f.species} for ${formatDay(f.countedOn)} by ${formatQuantities(f.quantities, { signed: true })}, which takes a harvest limit of that day over.`
    : `${took}, which takes a harvest limit over.`;
  return {
    purpose: 'breach', url, dedupeKey: (to) => `breach:${f.entryId}:${to}`,
    heading: `Limit breached on ${f.parcelName}`,
    paragraphs: [`${what} They confirmed it knowingly; the entry is flagged as a breach.`, follow],
  };
}
