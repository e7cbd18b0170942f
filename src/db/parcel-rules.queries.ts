import { and, asc, desc, eq, sql } from 'drizzle-orm';
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
      .select({ id: allowances.id, speciesId: species.id, commonName: species.commonName, scientificName: species.scientificName, seasons: allowances.seasons, methods: allowances.methods })
      .from(allowances)
      .innerJoin(species, eq(species.id, allowances.speciesId))
      .where(and(eq(allowances.parcelId, parcelId), owned))
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

/** Sets (creates or replaces) the allowance of one species on the parcel, with its parcel-level limits. */
export async function saveAllowance(db: Executor, { parcelId, ownerId, allowance }: { parcelId: string; ownerId: string; allowance: AllowanceInput }) {
  return db.transaction(async (tx) => {
    if (!(await ownsParcel(tx, { parcelId, ownerId }))) return null;
    const [row] = await tx
      .insert(allowances)
      .values({ parcelId, speciesId: allowance.speciesId, seasons: allowance.seasons, methods: allowance.methods })
      .onConflictDoUpdate({ target: [allowances.parcelId, allowances.speciesId], set: { seasons: allowance.seasons, methods: allowance.methods, updatedAt: new Date() } })
      .returning({ id: allowances.id });
    if (!row) return null;
    await tx.delete(limits).where(and(eq(limits.allowanceId, row.id), sql`${limits.permitId} is null`));
    if (allowance.limits.length) await tx.insert(limits).values(allowance.limits.map((l) => ({ ...l, allowanceId: row.id })));
    return row;
  });
}

export async function removeAllowance(db: Executor, { parcelId, ownerId, allowanceId }: { parcelId: string; ownerId: string; allowanceId: string }) {
  const rows = await db.delete(allowances).where(and(eq(allowances.id, allowanceId), eq(allowances.parcelId, parcelId), ownedBy(parcelId, ownerId))).returning({ id: allowances.id });
  return rows.length > 0;
}

export async function ownsParcel(db: Executor, { parcelId, ownerId }: { parcelId: string; ownerId: string }) {
  const rows = await db.select({ id: parcels.id }).from(parcels).where(and(eq(parcels.id, parcelId), eq(parcels.ownerId, ownerId)));
  return rows.length > 0;
}
