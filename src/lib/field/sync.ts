import { checkPermit, permitCovers } from './permit-check';
import { flagFor, type FlagDecision } from './counting';
import { currentSeason } from './time';
import type { AllowanceFacts, Forager, ParcelFacts, PermitFacts, Tally } from './types';

/**
 * What the server decides about an item a device recorded offline and sends later
 * (POST /api/field/sync): whether the device's clock can be believed, which permit the entry was
 * taken under, and which flag it raises once the true totals are counted. Pure; time is an argument.
 */

/** How far ahead of the server's clock a device's instant may be: the time a fix and a send take, not a wrong clock. */
export const aheadToleranceMs = 2 * 60 * 1000;
/** The oldest item a device may send: a queue older than this is a forgotten phone, not a dropped connection. */
export const maxAgeDays = 30;

const minutes = (ms: number) => Math.max(1, Math.round(ms / 60_000));
const roughly = (ms: number) => {
  const m = minutes(ms);
  if (m < 90) return `${m} ${m === 1 ? 'minute' : 'minutes'}`;
  const h = Math.round(m / 60);
  if (h < 48) return `${h} hours`;
  return `${Math.round(h / 24)} days`;
};

/**
 * Why an item's device instant cannot be believed, as a sentence the device keeps and shows; null when
 * it can. Ahead of the server by more than two minutes; before the field pack it was decided with was
 * downloaded (the device's clock was behind); or more than 30 days old.
 */
export function clockRefusal({ recordedAt, packAsOf, now }: { recordedAt: Date; packAsOf: Date; now: Date }): string | null {
  const ahead = recordedAt.getTime() - now.getTime();
  if (ahead > aheadToleranceMs) {
    return `Your phone's clock is ahead of the real time by about ${roughly(ahead)}; set it to automatic time and send again.`;
  }
  if (recordedAt.getTime() < packAsOf.getTime()) {
    return `Your phone's clock says this was recorded about ${roughly(packAsOf.getTime() - recordedAt.getTime())} before your field pack was downloaded, so the clock was wrong when you recorded it. Set the phone to automatic time, download the field pack again, and record it again with the right time.`;
  }
  if (now.getTime() - recordedAt.getTime() > maxAgeDays * 24 * 60 * 60 * 1000) {
    return `This was recorded more than ${maxAgeDays} days ago, too long ago to add to the tallies now. Tell the landowner what you took.`;
  }
  return null;
}

const grantedOnce: PermitFacts['state'][] = ['active', 'approved', 'expired', 'revoked'];

/**
 * The permit an entry recorded offline counts under: the one good on its local date; failing that, the
 * covering permit that once granted access (active, approved, expired or revoked; the forager's own
 * before a club's, the latest ending first), so an entry taken after a revocation is still told to the
 * holder's landowner and club. Null when no permit ever covered the forager here.
 */
export function permitRecordedUnder(parcel: ParcelFacts, forager: Forager, localDate: string): PermitFacts | null {
  const good = checkPermit(parcel, forager, localDate).permit;
  if (good) return good;
  const once = parcel.permits
    .filter((p) => permitCovers(p, forager) && grantedOnce.includes(p.state) && p.startsOn <= localDate)
    .sort((x, y) => Number(y.holderUserId === forager.id) - Number(x.holderUserId === forager.id) || y.endsOn.localeCompare(x.endsOn));
  return once[0] ?? null;
}

/**
 * The season occurrence an entry recorded offline counts in. Out of season, it is its own day: the
 * entry counts on its day (and visit) but in no season's total, since it was taken in none.
 */
export function syncSeason(allowance: AllowanceFacts, localDate: string): { start: string; end: string; inSeason: boolean } {
  const season = currentSeason(allowance.seasons, localDate);
  return season ? { ...season, inSeason: true } : { start: localDate, end: localDate, inSeason: false };
}

export type SyncFlag = Omit<FlagDecision, 'kind'> & { kind: 'breach' | 'nearing' | 'over-on-sync' | 'off-permit'; message: string };

const scopeWords: Record<string, string> = { visit: 'visit', day: 'day', season: 'season', 'parcel-season': "parcel's season", 'club-season': "club's season" };
const scopesInWords = (scopes: string[]) => scopes.map((s) => scopeWords[s] ?? s).join(', ');

/**
 * The flag an entry recorded offline raises, once checked against the true totals at its time:
 * not clear when it was taken (`offPermit`: the engine's reasons) → off-permit; over with the going
 * over confirmed on the device → breach; over without → over-on-sync; a tally into nearing or
 * reached → nearing. Null when none.
 */
export function syncFlagFor(before: Tally[], after: Tally[], { breach, acknowledged, offPermit }: { breach: boolean; acknowledged: boolean; offPermit: string[] | null }): SyncFlag | null {
  const decision = flagFor(before, after, breach);
  if (offPermit) {
    const base = decision ?? { scopes: [], worstState: after.map((t) => t.state).includes('over') ? 'over' : 'within' };
    const over = breach ? ` It also took the ${scopesInWords(base.scopes)} limit over.` : '';
    return { ...base, kind: 'off-permit', message: `Off permit: harvest was not allowed where and when this was recorded. ${offPermit.join(' ')}${over}`.trim() };
  }
  if (!decision) return null;
  if (decision.kind === 'breach' && !acknowledged) {
    return {
      ...decision,
      kind: 'over-on-sync',
      message: `Over on sync: recorded offline within the device's tallies, over once others' entries were counted (the ${scopesInWords(decision.scopes)} limit). It is recorded and the landowner is told.`,
    };
  }
  if (decision.kind === 'breach') return { ...decision, message: `Breach: you confirmed going over the ${scopesInWords(decision.scopes)} limit; the landowner is told.` };
  return { ...decision, message: `This entry took the ${scopesInWords(decision.scopes)} tally to ${decision.worstState}.` };
}
