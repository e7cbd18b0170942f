import { addDecimals, type Measure } from '../units';
import { latToTileY, lonToTileX, tileCount, type Tile } from '../tiles';
import { currentSeason, localDateAt } from './time';
import { candidatesNear, decideCheckIn } from './verdict';
import { formatDay } from './words';
import type { CheckInAnswer, EntryQuantity, Forager, LonLat, Method, ParcelFacts, ScopeUsage, Usage } from './types';

/**
 * The field pack: what a phone carries to decide a check-in with no signal. Everything the engine
 * needs about each parcel the forager may use (personal and club permits), the forager's tallies as
 * of the download, and each parcel's current terms. Plain data, kept in IndexedDB.
 */
export type FieldPack = {
  format: 1;
  /** The instant it was made on the server (ISO). */
  asOf: string;
  forager: Forager;
  parcels: ParcelFacts[];
  /** How many parcels the forager may use in all; the pack holds at most `packMaxParcels` of them, by name. */
  usable: number;
  /** What the forager (and everyone, for parcel and club seasons) had taken, by parcel, at `asOf`. */
  usage: Record<string, Usage>;
  /** The parcel-local date `usage` was summed for: its visit and day totals hold only on that date. */
  usageDay: Record<string, string>;
  /** The current terms of each parcel, as a forager reads them before going. */
  terms: Record<string, { version: number; body: string } | null>;
};

/** The most parcels a pack holds (a phone's storage and the offline verdict's time stay bounded). */
export const packMaxParcels = 500;

/** A pack this old is said to be old in every verdict it gives. */
export const packMaxAgeDays = 7;

/** Where a position came from: the device's fix, or a spot tapped on the map. */
export type PositionSource = 'gps' | 'tap';

/** A check-in or an entry made on the device and not yet known to be recorded by the server. */
export type QueuedEntry = {
  kind: 'entry';
  idempotencyKey: string;
  /** The device's clock when it was recorded (ISO). */
  recordedAt: string;
  position: { longitude: number; latitude: number; accuracyM: number; source: PositionSource };
  parcelId: string;
  speciesId: string;
  method: Method;
  quantities: EntryQuantity[];
  acknowledgeOver: boolean;
};

export type QueuedCheckIn = {
  kind: 'check-in';
  idempotencyKey: string;
  recordedAt: string;
  position: QueuedEntry['position'];
};

/** An entry the device counts in its own tallies until the pack it decides with includes it. */
export type CountedEntry = {
  parcelId: string;
  speciesId: string;
  /** The parcel-local date it counts on. */
  localDate: string;
  /** The club whose permit it counts under, if any. */
  clubId: string | null;
  /** Its quantities in each measure's base unit (g, mL, items). */
  bases: Partial<Record<Measure, string>>;
};

/** Whole days between two instants, rounded down. */
const daysBetween = (from: Date, to: Date) => Math.floor((to.getTime() - from.getTime()) / 86_400_000);

/**
 * What has been taken on a parcel as the device knows it on a local date: the pack's sums (its
 * visit and day totals only when that date is the pack's), plus each entry made on the device
 * since, on its own day and in the season of its species.
 */
export function offlineUsage(pack: FieldPack, parcelId: string, localDate: string, counted: CountedEntry[]): Usage {
  const parcel = pack.parcels.find((p) => p.id === parcelId);
  const sameDay = pack.usageDay[parcelId] === localDate;
  const usage: Usage = {};
  for (const [speciesId, byMeasure] of Object.entries(pack.usage[parcelId] ?? {})) {
    const allowance = parcel?.allowances.find((a) => a.speciesId === speciesId);
    // A season that has ended since the download counts nothing of what the pack summed.
    const season = allowance ? currentSeason(allowance.seasons, localDate) : null;
    const packSeason = allowance ? currentSeason(allowance.seasons, pack.usageDay[parcelId] ?? localDate) : null;
    const sameSeason = season !== null && packSeason !== null && season.start === packSeason.start;
    usage[speciesId] = {};
    for (const [measure, scopes] of Object.entries(byMeasure ?? {}) as [Measure, ScopeUsage][]) {
      (usage[speciesId] as Partial<Record<Measure, ScopeUsage>>)[measure] = {
        visit: sameDay ? scopes.visit : undefined,
        day: sameDay ? scopes.day : undefined,
        season: sameSeason ? scopes.season : undefined,
        'parcel-season': sameSeason ? scopes['parcel-season'] : undefined,
        'club-season': sameSeason ? { ...scopes['club-season'] } : {},
      };
    }
  }
  for (const entry of counted) {
    if (entry.parcelId !== parcelId || !parcel) continue;
    const allowance = parcel.allowances.find((a) => a.speciesId === entry.speciesId);
    const season = allowance ? currentSeason(allowance.seasons, localDate) : null;
    const entrySeason = allowance ? currentSeason(allowance.seasons, entry.localDate) : null;
    const inSeason = season !== null && entrySeason !== null && season.start === entrySeason.start;
    const onDay = entry.localDate === localDate;
    const species = (usage[entry.speciesId] ??= {});
    for (const [measure, base] of Object.entries(entry.bases) as [Measure, string][]) {
      const had = species[measure] ?? { 'club-season': {} };
      const plus = (v: string | undefined, yes: boolean) => (yes ? addDecimals(v ?? '0', base) : v);
      const clubs = { ...had['club-season'] };
      if (inSeason && entry.clubId) clubs[entry.clubId] = addDecimals(clubs[entry.clubId] ?? '0', base);
      species[measure] = {
        // The device's visit on a parcel is its local day there: one visit per parcel and day.
        visit: plus(had.visit, onDay),
        day: plus(had.day, onDay),
        season: plus(had.season, inSeason),
        'parcel-season': plus(had['parcel-season'], inSeason),
        'club-season': clubs,
      };
    }
  }
  return usage;
}

/** Sentences that qualify an answer decided from the pack: how old it is, and whether a permit it holds has ended. */
export function packCaveats(pack: FieldPack, answer: CheckInAnswer, at: Date): string[] {
  const asOf = new Date(pack.asOf);
  const caveats: string[] = [];
  const age = daysBetween(asOf, at);
  if (age >= packMaxAgeDays) {
    caveats.push(`Your field pack is ${age} days old: permits, closures and other people's harvests may have changed since. Refresh it when you have signal.`);
  }
  const parcel = pack.parcels.find((p) => p.id === answer.parcel?.id);
  if (parcel) {
    const packDay = localDateAt(asOf, parcel.timeZone);
    const today = localDateAt(at, parcel.timeZone);
    const ended = parcel.permits.filter((p) => p.endsOn >= packDay && p.endsOn < today);
    for (const permit of ended) caveats.push(`A permit in your field pack for ${parcel.name} ended on ${formatDay(permit.endsOn)}.`);
  }
  return caveats;
}

/**
 * A check-in decided on the device from the pack, by the same engine the server runs, with the
 * pack's tallies plus the entries made on the device since.
 */
export function offlineCheckIn(pack: FieldPack, { position, accuracyM, at, counted }: { position: LonLat; accuracyM: number; at: Date; counted: CountedEntry[] }): CheckInAnswer & { caveats: string[] } {
  const answer = decideCheckIn({
    position,
    accuracyM,
    at,
    forager: pack.forager,
    // The parcels the server would decide among (candidatesNear): it names no parcel farther away.
    parcels: candidatesNear(pack.parcels, position, accuracyM),
    usage: (parcelId) => {
      const parcel = pack.parcels.find((p) => p.id === parcelId);
      return offlineUsage(pack, parcelId, parcel ? localDateAt(at, parcel.timeZone) : '', counted);
    },
  });
  return { ...answer, caveats: packCaveats(pack, answer, at) };
}

/** The zooms a person uses on foot: the valley, then paths and clearings. */
export const packZooms = [13, 14, 15, 16, 17];

/**
 * The map tiles a pack needs offline: those covering each parcel (with a margin of a tile) at each
 * of `zooms`, each tile once, at most `cap` of them, coarse zooms first so a cap drops the finest
 * detail. Parcels far apart cost only their own tiles, not the whole box between them.
 */
export function packTiles(pack: Pick<FieldPack, 'parcels'>, zooms: number[] = packZooms, cap = 800): Tile[] {
  const boxes = pack.parcels.map((p) => {
    const corners = p.boundary.coordinates.flatMap((polygon) => polygon[0] ?? []);
    const lons = corners.map((c) => c[0] as number);
    const lats = corners.map((c) => c[1] as number);
    return { west: Math.min(...lons), east: Math.max(...lons), south: Math.min(...lats), north: Math.max(...lats) };
  });
  const tiles: Tile[] = [];
  const seen = new Set<string>();
  for (const z of [...zooms].sort((a, b) => a - b)) {
    const last = tileCount(z) - 1;
    for (const box of boxes) {
      const [x0, x1] = [Math.max(0, Math.floor(lonToTileX(box.west, z)) - 1), Math.min(last, Math.floor(lonToTileX(box.east, z)) + 1)];
      const [y0, y1] = [Math.max(0, Math.floor(latToTileY(box.north, z)) - 1), Math.min(last, Math.floor(latToTileY(box.south, z)) + 1)];
      for (let x = x0; x <= x1; x++) for (let y = y0; y <= y1; y++) {
        const key = `${z}/${x}/${y}`;
        if (seen.has(key)) continue;
        if (tiles.length >= cap) return tiles;
        seen.add(key);
        tiles.push({ z, x, y });
      }
    }
  }
  return tiles;
}
