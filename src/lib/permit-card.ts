import { limitsInForce } from './field/tallies';
import type { AllowanceFacts, PermitFacts } from './field/types';
import { formatLimit, formatSeasonWindows } from './tally-words';
import type { PermitStatement } from './permit-statement';

/**
 * What a permit card says, in words: each allowed species with its season, methods and the limits in
 * force under this permit (the parcel's, or the permit's tighter ones), and the short form of the same
 * that the signed statement carries.
 */

export type CardSpecies = { name: string; scientificName: string; seasons: string; methods: string; limits: string[] };

export type CardPermit = Pick<PermitFacts, 'id' | 'holderUserId' | 'holderClubId'>;

/** The limits in force for one species under this permit (club-wide caps only on a club permit). */
function limitsOf(allowance: AllowanceFacts, permit: CardPermit) {
  const facts: PermitFacts = { ...permit, state: 'active', startsOn: '', endsOn: '', feeMinor: null, feePaid: true, acceptedTermsId: null };
  return limitsInForce(allowance, { forager: { id: permit.holderUserId ?? '', clubIds: permit.holderClubId ? [permit.holderClubId] : [] }, permit: facts });
}

/** Each species as the card shows it: "1 kg a day", "3 kg a season". */
export function cardSpecies(allowances: readonly AllowanceFacts[], permit: CardPermit): CardSpecies[] {
  return allowances.map((a) => ({
    name: a.commonName,
    scientificName: a.scientificName,
    seasons: formatSeasonWindows(a.seasons),
    methods: a.methods.join(', '),
    limits: limitsOf(a, permit).map(formatLimit),
  }));
}

/** One statement line: "Chaga: 500 g a visit, 1.5 kg a season"; a species with no limit says so. */
function statementLine(allowance: AllowanceFacts, permit: CardPermit, withLimits: boolean): string {
  if (!withLimits) return allowance.commonName;
  const limits = limitsOf(allowance, permit).map(formatLimit);
  return `${allowance.commonName}: ${limits.length ? limits.join(', ') : 'no limit set'}`;
}

/**
 * The most a statement's payload may hold, in bytes of JSON. With the header, the signature and the
 * link in front, the QR code stays at or below version 22 at error correction M (105 modules a side,
 * ISO/IEC 18004 table 7), which a phone reads from another phone's screen.
 */
export const statementPayloadBudget = 420;

const payloadBytes = (statement: PermitStatement) => new TextEncoder().encode(JSON.stringify(statement)).length;

/**
 * The statement of a permit. Its species lines carry their limits when they fit the budget; when
 * they do not, only the species' names; when even those do not, the first names and "and N more
 * (see the card)".
 */
export function permitStatement(
  facts: { permit: CardPermit; holder: string; parcel: string; timeZone: string; startsOn: string; endsOn: string; allowances: readonly AllowanceFacts[] },
  now: Date,
): PermitStatement {
  const base: PermitStatement = {
    permit: facts.permit.id,
    holder: facts.holder,
    ...(facts.permit.holderClubId ? { club: true as const } : {}),
    parcel: facts.parcel,
    tz: facts.timeZone,
    from: facts.startsOn,
    to: facts.endsOn,
    species: [],
    iat: Math.floor(now.getTime() / 1000),
  };
  const full = { ...base, species: facts.allowances.map((a) => statementLine(a, facts.permit, true)) };
  if (payloadBytes(full) <= statementPayloadBudget) return full;
  const names = facts.allowances.map((a) => statementLine(a, facts.permit, false));
  for (let kept = names.length; kept >= 0; kept--) {
    const rest = names.length - kept;
    const shortened = { ...base, species: [...names.slice(0, kept), ...(rest > 0 ? [`and ${rest} more (see the card)`] : [])] };
    if (payloadBytes(shortened) <= statementPayloadBudget) return shortened;
  }
  return base;
}
