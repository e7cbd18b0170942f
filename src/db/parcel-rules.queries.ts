import { and, asc, desc, eq, isNull, sql } from 'drizzle-orm';
import { formatDay } from '../lib/field/words';
import { AppError } from '../lib/errors';
import { localDate } from '../lib/local-time';
import { measureOf, unitsOfMeasure, type Measure, type Unit } from '../lib/units';
import type { AllowanceInput, BoundaryGeometry } from '../lib/land.schemas';
import type { Executor } from './client';
import { allowances, closures, hazards, limits, noHarvestZones, parcels, species, terms } from './schema';

/**
 * The rules a landowner keeps on a parcel: no-harvest zones, closures, hazards, versioned terms
 * and allowances. Every query names the owner, so another owner's parcel matches nothing.
 */
const ownedBy = (parcelId: string, ownerId: string) =>
  sql`exists (select 1 from ${parcels} where ${parcels.id} = ${parcelId} and ${parcels.ownerId} = ${ownerId})`;

export async function listParcelRules(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const owned = ownedBy(parcelId, ownerId);
  const [zones, closureRows, hazardRows, termRows, allowanceRows] = await Promise.all([
    db
      .select({ id: noHarvestZones.id, name: noHarvestZones.name, reason: noHarvestZones.reason, boundary: sql<BoundaryGeometry>`ST_AsGeoJSON(${noHarvestZones.boundary}, 7)::json`, areaM2: sql<number>`ST_Area(${noHarvestZones.boundary}::geography)` })
      .from(noHarvestZones)
      .where(and(eq(noHarvestZones.parcelId, parcelId), owned))
      .orderBy(asc(noHarvestZones.name)),
    db.select().from(closures).where(and(eq(closures.parcelId, parcelId), owned)).orderBy(asc(closures.startsOn)),
    db.select().from(hazards).where(and(eq(hazards.parcelId, parcelId), owned)).orderBy(asc(hazards.title)),
    db.select().from(terms).where(and(eq(terms.parcelId, parcelId), owned)).orderBy(desc(terms.version)),
    db
      .select({ id: allowances.id, speciesId: species.id, commonName: species.commonName, scientificName: species.scientificName, speciesRetiredAt: species.retiredAt, seasons: allowances.seasons, methods: allowances.methods })
      .from(allowances)
      .innerJoin(species, eq(species.id, allowances.speciesId))
      .where(and(eq(allowances.parcelId, parcelId), isNull(allowances.removedAt), owned))
      .orderBy(asc(species.commonName)),
  ]);
  const limitRows = allowanceRows.length
    ? await db
        .select({ allowanceId: limits.allowanceId, scope: limits.scope, quantity: limits.quantity, unit: limits.unit })
        .from(limits)
        .innerJoin(allowances, eq(allowances.id, limits.allowanceId))
        .where(and(eq(allowances.parcelId, parcelId), sql`${limits.permitId} is null`, owned))
    : [];
  const withLimits = allowanceRows.map((a) => ({ ...a, limits: limitRows.filter((l) => l.allowanceId === a.id) }));
  return { zones, closures: closureRows, hazards: hazardRows, terms: termRows, allowances: withLimits };
}

export async function addZone(db: Executor, { parcelId, ownerId, zone }: { parcelId: string; ownerId: string; zone: { name: string; reason: string; boundary: BoundaryGeometry } }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(noHarvestZones).values({ ...zone, parcelId, createdBy: ownerId }).returning({ id: noHarvestZones.id });
  return row ?? null;
}

/** Deletes one of the owner's rule rows (zone, closure or hazard); false when nothing matched. */
export async function removeRule(db: Executor, { table, id, parcelId, ownerId }: { table: 'zone' | 'closure' | 'hazard'; id: string; parcelId: string; ownerId: string }) {
  const target = { zone: noHarvestZones, closure: closures, hazard: hazards }[table];
  const rows = await db.delete(target).where(and(eq(target.id, id), eq(target.parcelId, parcelId), ownedBy(parcelId, ownerId))).returning({ id: target.id });
  return rows.length > 0;
}

export async function addClosure(db: Executor, { parcelId, ownerId, closure }: { parcelId: string; ownerId: string; closure: { startsOn: string; endsOn: string; reason: string } }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(closures).values({ ...closure, parcelId, createdBy: ownerId }).returning({ id: closures.id });
  return row ?? null;
}

export async function addHazard(db: Executor, { parcelId, ownerId, hazard }: { parcelId: string; ownerId: string; hazard: { kind: (typeof hazards.$inferInsert)['kind']; title: string; detail: string } }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db.insert(hazards).values({ ...hazard, parcelId }).returning({ id: hazards.id });
  return row ?? null;
}

/** Publishes a new version of the parcel's terms; earlier versions stay, as permits point at them. */
export async function publishTerms(db: Executor, { parcelId, ownerId, body, now }: { parcelId: string; ownerId: string; body: string; now: Date }) {
  if (!(await ownsParcel(db, { parcelId, ownerId }))) return null;
  const [row] = await db
    .insert(terms)
    .values({ parcelId, body, publishedBy: ownerId, publishedAt: now, version: sql`(select coalesce(max(${terms.version}), 0) + 1 from ${terms} where ${terms.parcelId} = ${parcelId})` })
    .returning({ id: terms.id, version: terms.version });
  return row ?? null;
}

const measureSet = (units: readonly { unit: string }[]) => [...new Set(units.map((l) => measureOf(l.unit as Unit)))].sort();

/**
 * Sets (creates or replaces) the allowance of one species on the parcel, with its parcel-level
 * limits; adding a removed species again brings its row back. What the limits measure may not
 * change while entries count in a season that has not ended: their tallies would silently start
 * again from nothing. The amounts may change at any time.
 */
export async function saveAllowance(db: Executor, { parcelId, ownerId, allowance, now }: { parcelId: string; ownerId: string; allowance: AllowanceInput; now: Date }) {
  return db.transaction(async (tx) => {
    const [parcel] = await tx.select({ timeZone: parcels.timeZone }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId))).for('update');
    if (!parcel) return null;
    const [current] = await tx
      .select({ id: allowances.id, removedAt: allowances.removedAt })
      .from(allowances)
      .where(and(eq(allowances.parcelId, parcelId), eq(allowances.speciesId, allowance.speciesId)));
    const [chosen] = await tx.select({ retiredAt: species.retiredAt, commonName: species.commonName }).from(species).where(eq(species.id, allowance.speciesId));
    if (chosen?.retiredAt && !(current && !current.removedAt)) {
      throw new AppError(409, 'species-retired', `${chosen.commonName} is retired from the catalogue, so it cannot be added to an allowance; the allowances that already name it stay as they are.`, 'speciesId');
    }
    if (current && !current.removedAt) {
      const before = measureSet(await tx.select({ unit: limits.unit }).from(limits).where(and(eq(limits.allowanceId, current.id), isNull(limits.permitId))));
      const after = measureSet(allowance.limits);
      if (before.join() !== after.join()) {
        const today = localDate(now, parcel.timeZone);
        const [open] = await tx.execute<{ season_end: string; common_name: string }>(sql`
          select max(e.season_end)::text as season_end, (select s.common_name from species s where s.id = ${allowance.speciesId}::uuid) as common_name
          from harvest_entries e where e.parcel_id = ${parcelId}::uuid and e.species_id = ${allowance.speciesId}::uuid and e.season_end >= ${today}::date
          having count(*) > 0`);
        if (open) {
          const kinds = (ms: string[]) => (ms.length ? ms.map((m) => unitsOfMeasure(m as Measure)).join(' and in ') : 'no unit');
          throw new AppError(
            409,
            'measure-in-use',
            `${open.common_name} already has entries this season counted in ${kinds(before)}. Its limits must keep counting that way until the season ends on ${formatDay(open.season_end)}; you can still change the amounts, seasons and methods.`,
            'limits',
          );
        }
      }
    }
    const [row] = await tx
      .insert(allowances)
      .values({ parcelId, speciesId: allowance.speciesId, seasons: allowance.seasons, methods: allowance.methods })
      .onConflictDoUpdate({ target: [allowances.parcelId, allowances.speciesId], set: { seasons: allowance.seasons, methods: allowance.methods, removedAt: null, removedBy: null, updatedAt: now } })
      .returning({ id: allowances.id });
    if (!row) return null;
    await tx.delete(limits).where(and(eq(limits.allowanceId, row.id), sql`${limits.permitId} is null`));
    if (allowance.limits.length) await tx.insert(limits).values(allowance.limits.map((l) => ({ ...l, allowanceId: row.id })));
    return row;
  });
}

/**
 * Removes an allowance: foragers may no longer take the species, but the row stays, with the
 * permits' tighter limits on it, as the history entries and permits point at.
 */
export async function removeAllowance(db: Executor, { parcelId, ownerId, allowanceId, now }: { parcelId: string; ownerId: string; allowanceId: string; now: Date }) {
  const rows = await db
    .update(allowances)
    .set({ removedAt: now, removedBy: ownerId, updatedAt: now })
    .where(and(eq(allowances.id, allowanceId), eq(allowances.parcelId, parcelId), isNull(allowances.removedAt), ownedBy(parcelId, ownerId)))
    .returning({ id: allowances.id });
  return rows.length > 0;
}

export async function ownsParcel(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const rows = await db.select({ id: parcels.id }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)));
  return rows.length > 0;
}
