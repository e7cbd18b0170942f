import { formatDay } from './field/words';
import type { TallyState } from './field/types';
import { formatAmount, formatLimit, formatPercent, formatQuantities, formatQuantity, stateLabel, unitAfter } from './tally-words';
import { subtractDecimals } from './units';

/**
 * The words of each kind of flag, on the flags lists and in the e-mail that tells the landowner (and
 * the stewards of a club permit) about an entry. Pure, so the mail's words are tested without sending.
 */
export type FlagKind = 'breach' | 'nearing' | 'over-on-sync' | 'off-permit';

export const flagKinds: FlagKind[] = ['breach', 'nearing', 'over-on-sync', 'off-permit'];

export const flagKindWords: Record<FlagKind, string> = { breach: 'Breach', nearing: 'Nearing', 'over-on-sync': 'Over on sync', 'off-permit': 'Off permit' };

/**
 * The word a flag's title starts with. It follows the worst state the entry took a tally to, so a
 * nearing flag whose worst tally is reached reads "Reached", never "Nearing"; the other kinds say
 * how they came about.
 */
export function flagTitleWord(kind: FlagKind, worstState: string): string {
  if (kind !== 'nearing') return flagKindWords[kind] ?? kind;
  if (worstState === 'over') return 'Over';
  if (worstState === 'reached') return 'Reached';
  return flagKindWords.nearing;
}

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

/** A tally as a flag keeps it: as it stood after the flagged entry, in its limit's unit. */
export type FlagTallyFacts = { scope: string; state: string; used: string; limit: string; unit: string; percent: number };

/**
 * How far each tally of a flag went: "0.2 kg over the limit of 1 kg a day (1.2 kg counted)" for one
 * over; "0.85 kg of 1 kg a day (85 %), ◑ nearing" for the others.
 */
export function flagTallyLine(t: FlagTallyFacts): string {
  const limit = formatLimit({ quantity: t.limit, unit: t.unit, scope: t.scope });
  if (t.state === 'over') {
    const over = subtractDecimals(t.used, t.limit);
    return `${formatAmount(over)} ${unitAfter(over, t.unit)} over the limit of ${limit} (${formatQuantity({ quantity: t.used, unit: t.unit })} counted)`;
  }
  const state = ['within', 'nearing', 'reached', 'over'].includes(t.state) ? stateLabel(t.state as TallyState) : t.state;
  return `${formatQuantity({ quantity: t.used, unit: t.unit })} of ${limit} (${formatPercent(t.percent)}), ${state}`;
}

export type MemberNoteFacts = {
  kind: FlagKind;
  tallies: FlagTallyFacts[];
  parcelName: string;
  species: string;
  /** The parcel-local day the entry counts on. */
  countedOn: string;
  quantities: { quantity: string; unit: string }[];
  authorName: string;
  /** "the landowner" or "a steward of Three Ridges Foraging Society". */
  author: string;
};

/** The e-mail that carries a follow-up note to the forager whose entry was flagged, with the flag's facts. */
export function memberNoteMail(f: MemberNoteFacts, note: string): { heading: string; paragraphs: string[] } {
  const over = f.tallies.filter((t) => t.state === 'over');
  const shown = over.length > 0 ? over : f.tallies;
  return {
    heading: `A note about your ${f.species} entry on ${f.parcelName}`,
    paragraphs: [
      `${f.authorName}, ${f.author}, wrote about your entry of ${formatQuantities(f.quantities)} of ${f.species} on ${f.parcelName}, counted on ${formatDay(f.countedOn)} (flagged: ${flagKindWords[f.kind].toLowerCase()}):`,
      `"${note}"`,
      ...(shown.length > 0 ? [`${over.length > 0 ? 'How much over' : 'Where it stood'}: ${shown.map(flagTallyLine).join('; ')}.`] : []),
      'The ledger keeps your entry as it is; if it was recorded wrongly, add a correction in My ledger. Answer them directly, not to this e-mail.',
    ],
  };
}
