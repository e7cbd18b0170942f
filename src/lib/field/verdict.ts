import { boundingBoxContains, exteriorContains, placeMeasured, placePosition } from './geometry';
import { checkPermit } from './permit-check';
import { talliesFor, worstState } from './tallies';
import { closuresOn, currentSeason, localDateAt } from './time';
import { formatDay, formatDistance, formatMetres, joinWords } from './words';
import type { AllowanceFacts, CheckInAnswer, Forager, LonLat, MeasuredParcelFacts, MeasuredPosition, Method, MultiPolygon, ParcelFacts, PermitFacts, Placement, SpeciesAnswer, Usage } from './types';

/**
 * The answer to a check-in, in the order DESIGN.md sets ("What it decides — the rules"):
 * containment with accuracy, no-harvest zones, permit, closures, then each species.
 */

export type CheckIn = {
  position: LonLat;
  /** Metres at 95 % confidence (W3C Geolocation API `coords.accuracy`). */
  accuracyM: number;
  at: Date;
  forager: Forager;
  /**
   * The candidate parcels near the position (the GiST lookup), with everything the verdict needs:
   * with their boundaries (the phone's field pack), or measured at the position by the database (the server).
   */
  parcels: (ParcelFacts | MeasuredParcelFacts)[];
  /** What has been taken so far on a parcel, per species and scope, in base units. Called only for a clear verdict. */
  usage: (parcelId: string) => Usage;
};

const methodGerund: Record<Method, string> = {
  cut: 'cutting above ground', pick: 'picking', dig: 'digging roots or bulbs', strip: 'stripping bark', 'gather-fallen': 'gathering what has fallen',
};

/** Whether a proposed entry's method is allowed for this species on this parcel, and if not, why. */
export function methodAllowed(allowance: AllowanceFacts, method: Method): { allowed: true } | { allowed: false; reason: string } {
  if (allowance.methods.includes(method)) return { allowed: true };
  if (allowance.methods.length === 0) return { allowed: false, reason: `The landowner allows no way of taking ${allowance.commonName} here.` };
  return {
    allowed: false,
    reason: `${allowance.commonName} may not be taken here by ${methodGerund[method]}; the landowner allows only ${joinWords(allowance.methods.map((m) => methodGerund[m]), 'or')}.`,
  };
}

function speciesAnswer(allowance: AllowanceFacts, usage: Usage, localDate: string, context: { forager: Forager; permit: PermitFacts; thresholdPercent: number }): SpeciesAnswer {
  // No season window at all is read as never open: the allowance form asks for one, and silence must not mean "always".
  const inSeason = currentSeason(allowance.seasons, localDate) !== null;
  const tallies = talliesFor(allowance, usage, context);
  const state = !inSeason ? 'out-of-season' : allowance.methods.length === 0 ? 'method-not-allowed' : (worstState(tallies.map((t) => t.state)) ?? 'open');
  return {
    speciesId: allowance.speciesId,
    commonName: allowance.commonName,
    scientificName: allowance.scientificName,
    state,
    inSeason,
    seasons: allowance.seasons,
    methods: allowance.methods,
    tallies,
    cautions: allowance.cautions,
    lookalikes: allowance.lookalikes,
  };
}

type Shape = { boundary: MultiPolygon } | { at: MeasuredPosition };

/** Where the position stands against a boundary, from the database's measurement when there is one, else from the vertices. */
function place(input: Pick<CheckIn, 'position' | 'accuracyM'>, shape: Shape, accuracyM = input.accuracyM): Placement {
  return 'at' in shape ? placeMeasured(shape.at, accuracyM) : placePosition(input.position, accuracyM, shape.boundary);
}

/** In some part's exterior ring, holes or not. A measured parcel is never a cut-out's: see MeasuredPosition. */
const inExterior = (shape: Shape, position: LonLat) => ('at' in shape ? shape.at.covered : exteriorContains(shape.boundary, position));

const parcelRef = (p: ParcelFacts | MeasuredParcelFacts) => ({ id: p.id, name: p.name, timeZone: p.timeZone });

/** Step 2 onwards, for the parcel the position is inside. */
function decideOnParcel(input: CheckIn, parcel: ParcelFacts | MeasuredParcelFacts, placement: Placement): CheckInAnswer {
  const localDate = localDateAt(input.at, parcel.timeZone);
  const base = { parcel: parcelRef(parcel), distanceToEdgeM: placement.distanceToEdgeM, localDate, hazards: parcel.hazards, species: [] };
  const permit = checkPermit(parcel, input.forager, localDate);

  // 2. No-harvest zones, tested as the parcel is: inside a zone, or too close to its edge to say, is closed.
  for (const zone of parcel.zones) {
    const atZone = place(input, zone);
    if (atZone.placement === 'outside') continue;
    const why = zone.reason ? ` (${zone.reason.replace(/\.$/, '')})` : '';
    const reasons =
      atZone.placement === 'inside'
        ? [`You are inside the no-harvest zone "${zone.name}" on ${parcel.name}: nothing may be taken here${why}.`]
        : [
            `You may be inside the no-harvest zone "${zone.name}" on ${parcel.name}: its edge is ${formatDistance(atZone.distanceToEdgeM)} away and your position is good to ${formatMetres(input.accuracyM)}. Nothing may be taken there${why}.`,
            'Move away from the zone, or wait for a better fix.',
          ];
    return { ...base, verdict: 'closed', permitId: permit.permit?.id ?? null, reasons: [...reasons, ...permit.reasons] };
  }

  // 3. Permit.
  if (!permit.permit) return { ...base, verdict: 'no-permit', permitId: null, reasons: permit.reasons };

  // 4. Closures of the whole parcel on the local date.
  const closures = closuresOn(parcel.closures, localDate);
  if (closures.length > 0) {
    const reasons = closures.map((c) => `${parcel.name} is closed from ${formatDay(c.startsOn)} to ${formatDay(c.endsOn)}: ${c.reason.replace(/\.$/, '')}.`);
    return { ...base, verdict: 'closed', permitId: permit.permit.id, reasons: [...reasons, 'Nothing may be taken while it is closed.'] };
  }

  // 5. Clear, with each species' season, methods and what remains.
  const usage = input.usage(parcel.id);
  const context = { forager: input.forager, permit: permit.permit, thresholdPercent: parcel.nearingThresholdPercent };
  const whose = permit.permit.holderUserId === input.forager.id ? 'your permit' : "your club's permit";
  return {
    ...base,
    verdict: 'clear',
    permitId: permit.permit.id,
    reasons: [
      `You may harvest on ${parcel.name} under ${whose}, which runs until ${formatDay(permit.permit.endsOn)}.`,
      "Identifying what you pick is your responsibility, and local law and the landowner's terms come first.",
    ],
    species: parcel.allowances.map((a) => speciesAnswer(a, usage, localDate, context)),
  };
}

/**
 * The parcels a check-in is decided among: those within the accuracy radius (at least a metre) of
 * the position, and those whose bounding box holds it (so one standing in a parcel's cut-out hears
 * of it). The server finds the same set with its indexes (src/server/field/check-in.ts); the phone
 * filters its field pack with this, so both decide among the same parcels.
 */
export function candidatesNear<P extends Pick<ParcelFacts, 'boundary'>>(parcels: P[], position: LonLat, accuracyM: number): P[] {
  const radius = Math.max(accuracyM, 1);
  return parcels.filter((p) => boundingBoxContains(p.boundary, position) || placePosition(position, radius, p.boundary).placement !== 'outside');
}

/** The verdict for a check-in: where the forager is, whether they may harvest, and what remains. */
export function decideCheckIn(input: CheckIn): CheckInAnswer {
  const { position, accuracyM, at, parcels } = input;
  if (!(accuracyM >= 0)) throw new RangeError(`accuracy must be a number of metres, 0 or more (got ${accuracyM})`);
  if (Number.isNaN(at.getTime())) throw new RangeError('the check-in time is not a valid instant');
  const placed = parcels.map((parcel) => ({ parcel, placement: place(input, parcel) }));

  // 1. Containment with accuracy. Overlapping parcels: the one this forager holds a good permit for, then the one the position is deepest in.
  const inside = placed.filter((p) => p.placement.placement === 'inside');
  if (inside.length > 0) {
    const ranked = inside
      .map((p) => ({ ...p, permitted: checkPermit(p.parcel, input.forager, localDateAt(at, p.parcel.timeZone)).permit !== null }))
      .sort((x, y) => Number(y.permitted) - Number(x.permitted) || y.placement.distanceToEdgeM - x.placement.distanceToEdgeM);
    const [chosen] = ranked;
    if (chosen) return decideOnParcel(input, chosen.parcel, chosen.placement);
  }

  const nearest = [...placed].sort((x, y) => x.placement.distanceToEdgeM - y.placement.distanceToEdgeM)[0];
  const edge = placed.filter((p) => p.placement.placement === 'edge').sort((x, y) => x.placement.distanceToEdgeM - y.placement.distanceToEdgeM)[0];
  if (edge) {
    const { parcel, placement } = edge;
    const d = placement.distanceToEdgeM;
    // Measured inside, the fix must come (radius − distance) further in; measured outside, (radius + distance).
    const measuredInside = place(input, parcel, 0).placement === 'inside';
    const move = Math.max(1, Math.ceil(measuredInside ? accuracyM - d : accuracyM + d));
    return {
      verdict: 'edge',
      reasons: [
        `You are ${formatDistance(d)} from the boundary of ${parcel.name} and your position is good to ${formatMetres(accuracyM)}, so it is too close to tell whether you are on the parcel.`,
        `Move about ${move} m further in, or wait for a better fix.`,
      ],
      parcel: parcelRef(parcel),
      permitId: null,
      distanceToEdgeM: d,
      localDate: localDateAt(at, parcel.timeZone),
      hazards: parcel.hazards,
      species: [],
    };
  }

  // Standing in a hole of a parcel (a cut-out its owner left out) is outside it, and is said so.
  const cutOut = placed.find((p) => inExterior(p.parcel, position));
  // The candidates are the parcels this forager may know of (src/db/field.queries.ts), so land here may still be someone's.
  return {
    verdict: 'outside',
    reasons: [
      cutOut
        ? `You are in a part of ${cutOut.parcel.name} that is not included: the parcel leaves this piece out, so nothing here is covered by a permit.`
        : 'You are not on any parcel open to you in Tallywood, so nothing here is covered by a permit.',
      nearest ? `The nearest is ${nearest.parcel.name}, ${formatDistance(nearest.placement.distanceToEdgeM)} away.` : 'None is near here.',
      'The land may still belong to someone: ask before you pick.',
    ],
    parcel: null,
    permitId: null,
    distanceToEdgeM: nearest ? nearest.placement.distanceToEdgeM : null,
    // With no parcel, the date is told in the nearest candidate's zone (the parcels of one valley share one), else UTC.
    localDate: localDateAt(at, nearest?.parcel.timeZone ?? 'UTC'),
    hazards: [],
    species: [],
  };
}
